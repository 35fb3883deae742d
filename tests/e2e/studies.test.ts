import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, test } from 'vitest';
import { pdfPages } from '../support/pdf-text';
import { baseUrl, cookieOnce } from './helpers';
import { jsonInit } from './line';
import { addStation, measureAll, postStudy, setUpStudyLine, stationGet, studyBody, type StudyLine, type StudyStation } from './studies-support';

// Measurement-system studies over HTTP: roles, bad input, the station being told what to measure,
// study parts kept out of lot yield and control charts, and a station that reads 0.3 % high found
// by the station correlation (the bias is what the test injects into its own physics).

const PARTS = 5;
const TRIALS = 2;
const STATION_B_BIAS = 0.003;

let s: StudyLine;
let b: StudyStation;
let outsider: StudyStation;
let studyId = 0;
let engineer = '';
let operator = '';

type Study = {
	id: number;
	status: string;
	filled: number;
	total: number;
	analysis: {
		overall: string;
		characteristics: {
			name: string;
			verdict: { overall: string } | null;
			anova: { ok: boolean; value?: { ndc: number | null; components: { totalGrr: { pctTolerance: number | null } } } };
			correlation: { ok: boolean; value?: { pairs: { station: string; reference: string; relativePct: { mean: number; ciLow: number; ciHigh: number } | null; pairedT: { p: number | null } }[] } };
		}[];
	} | null;
};

const createBody = () => ({
	productCode: s.line.code,
	name: `Study ${s.line.tag}`,
	parts: s.serials.map((serial) => ({ serial, lot: s.line.lotNumber })),
	stations: [s.first.name, b.name],
	trials: TRIALS
});
const studyCount = async () => ((await (await fetch(`${baseUrl()}/api/v1/studies`, { headers: { cookie: engineer } })).json()) as { studies: unknown[] }).studies.length;
const getStudy = async (): Promise<Study> => (await (await fetch(`${baseUrl()}/api/v1/studies/${studyId}`, { headers: { cookie: engineer } })).json()) as Study;
const lotTested = async () => ((await (await fetch(`${baseUrl()}/api/v1/lots/${s.line.lotNumber}`, { headers: { cookie: engineer } })).json()) as { tested: number }).tested;
const chartPoints = async (station: string) =>
	((await (await fetch(`${baseUrl()}/api/v1/charts?station=${encodeURIComponent(station)}`, { headers: { cookie: engineer } })).json()) as { charts: { pointCount: number }[] }).charts.reduce((a, c) => a + c.pointCount, 0);

beforeAll(async () => {
	[engineer, operator] = await Promise.all([cookieOnce('engineer'), cookieOnce('operator')]);
	s = await setUpStudyLine('MSA', PARTS);
	b = await addStation(`MSAB-${s.line.tag}`, STATION_B_BIAS);
	outsider = await addStation(`MSAX-${s.line.tag}`);
});

describe('studies API', () => {
	test('no session 401, operator 403, bad input 400 with nothing stored', async () => {
		expect((await fetch(`${baseUrl()}/api/v1/studies`)).status).toBe(401);
		expect((await fetch(`${baseUrl()}/api/v1/studies`, { headers: { cookie: operator } })).status).toBe(403);
		expect((await fetch(`${baseUrl()}/api/v1/studies`, jsonInit(operator, 'POST', createBody()))).status).toBe(403);
		const before = await studyCount();
		const bad = await fetch(`${baseUrl()}/api/v1/studies`, jsonInit(engineer, 'POST', { ...createBody(), trials: 1, stations: [s.first.name] }));
		expect(bad.status).toBe(400);
		const problem = (await bad.json()) as { errors: { path: string }[] };
		expect(problem.errors.map((e) => e.path).sort()).toEqual(['stations', 'trials']);
		const unknown = await fetch(`${baseUrl()}/api/v1/studies`, jsonInit(engineer, 'POST', { ...createBody(), stations: [s.first.name, `nope-${randomUUID()}`] }));
		expect(unknown.status).toBe(400);
		expect(((await unknown.json()) as { errors: { path: string }[] }).errors[0]?.path).toBe('stations.1');
		const twice = await fetch(`${baseUrl()}/api/v1/studies`, jsonInit(engineer, 'POST', { ...createBody(), parts: [...createBody().parts, createBody().parts[0]] }));
		expect(twice.status).toBe(400);
		expect(await studyCount()).toBe(before);
	});

	test('an engineer creates a draft; stations are told nothing until it starts, and posts are refused', async () => {
		const res = await fetch(`${baseUrl()}/api/v1/studies`, jsonInit(engineer, 'POST', createBody()));
		expect(res.status).toBe(201);
		const created = (await res.json()) as { id: number; status: string; total: number };
		studyId = created.id;
		expect(created.status).toBe('draft');
		expect(created.total).toBe(PARTS * 2 * TRIALS);
		expect((await stationGet(s.first.token)).study).toBeNull();
		const early = await postStudy(s.first.token, studyBody(studyId, s.line.lotNumber, s.serials[0] ?? '', 0, 0, 0));
		expect(early.status).toBe(409);
		expect(((await early.json()) as { type: string }).type).toContain('study-not-running');
		expect((await fetch(`${baseUrl()}/api/v1/studies/${studyId}`, jsonInit(operator, 'PATCH', { status: 'running' }))).status).toBe(403);
		expect((await fetch(`${baseUrl()}/api/v1/studies/${studyId}`, jsonInit(engineer, 'PATCH', { status: 'paused' }))).status).toBe(400);
		const start = await fetch(`${baseUrl()}/api/v1/studies/${studyId}`, jsonInit(engineer, 'PATCH', { status: 'running' }));
		expect(start.status).toBe(200);
		const view = await stationGet(s.first.token);
		expect(view.study?.id).toBe(studyId);
		expect(view.study?.next).toEqual({ serial: s.serials[0], lot: s.line.lotNumber, trial: 1 });
		expect(view.study?.biasV).toEqual([1, 4, 25]);
		expect((await stationGet(outsider.token)).study).toBeNull();
	});

	test('study posts are checked: unknown serial 400, wrong lot 400, outside station 409, nothing stored', async () => {
		const serial = s.serials[0] ?? '';
		const notPart = await postStudy(s.first.token, studyBody(studyId, s.line.lotNumber, `${serial}-X`, 0, 0, 0));
		expect(notPart.status).toBe(400);
		expect(((await notPart.json()) as { errors: { path: string }[] }).errors[0]?.path).toBe('units.0.serial');
		const wrongLot = await postStudy(s.first.token, studyBody(studyId, 'LT-NOT-THIS-ONE', serial, 0, 0, 0));
		expect(wrongLot.status).toBe(400);
		const stranger = await postStudy(outsider.token, studyBody(studyId, s.line.lotNumber, serial, 0, 0, 0));
		expect(stranger.status).toBe(409);
		expect(((await stranger.json()) as { detail: string }).detail).toContain(outsider.name);
		expect((await getStudy()).filled).toBe(0);
	});

	test('a retried post is stored once; the stations fill the grid; yield and charts are untouched', async () => {
		const [testedBefore, pointsBefore] = await Promise.all([lotTested(), chartPoints(s.first.name)]);
		const key = randomUUID();
		const body = studyBody(studyId, s.line.lotNumber, s.serials[0] ?? '', s.partRel.get(s.serials[0] ?? '') ?? 0, 0, 0.0002);
		const first = await postStudy(s.first.token, body, key);
		expect(first.status).toBe(201);
		const answer = (await first.json()) as { results: { serial: string; bin: number; study: { id: number; trial: number } }[] };
		expect(answer.results[0]?.study).toEqual({ id: studyId, trial: 1 });
		expect(answer.results[0]?.bin).toBe(1);
		const again = await postStudy(s.first.token, body, key);
		expect(again.status).toBe(200);
		expect(again.headers.get('idempotent-replayed')).toBe('true');
		expect((await getStudy()).filled).toBe(1);
		expect((await stationGet(s.first.token)).study?.next?.serial).toBe(s.serials[1]);

		const posts = await measureAll(s, [s.first, b]);
		expect(posts).toBe(PARTS * 2 * TRIALS - 1);
		const full = await postStudy(b.token, studyBody(studyId, s.line.lotNumber, s.serials[0] ?? '', 0, 0, 0));
		expect(full.status).toBe(409);
		expect(((await full.json()) as { type: string }).type).toContain('study-cell-complete');
		expect((await stationGet(b.token)).study?.next).toBeNull();
		expect(await lotTested()).toBe(testedBefore);
		expect(await chartPoints(s.first.name)).toBe(pointsBefore);
		expect(await chartPoints(b.name)).toBe(0);
		const units = (await (await fetch(`${baseUrl()}/api/v1/lots/${s.line.lotNumber}/units?limit=1000`, { headers: { cookie: engineer } })).json()) as { units: { kind: string }[] };
		expect(units.units.filter((u) => u.kind === 'study')).toHaveLength(PARTS * 2 * TRIALS);
	});

	test('the analysis runs on the complete grid and the correlation finds station B 0.3 % high', async () => {
		const study = await getStudy();
		expect(study.filled).toBe(study.total);
		expect(study.analysis?.characteristics.map((c) => c.name)).toEqual(['C@1V', 'C@4V', 'C@25V', 'ratio C1/C25']);
		for (const c of study.analysis?.characteristics ?? []) {
			expect(c.anova.ok).toBe(true);
			expect(['acceptable', 'conditional', 'not-acceptable', 'indeterminate']).toContain(c.verdict?.overall);
			expect(c.anova.value?.components.totalGrr.pctTolerance).not.toBeNull();
		}
		const c1 = study.analysis?.characteristics[0];
		const pair = c1?.correlation.value?.pairs[0];
		expect(pair?.station).toBe(s.first.name);
		expect(pair?.reference).toBe(b.name);
		// first − B ≈ −0.3 % / (1.003): the injected bias, inside the 95 % interval, which excludes 0.
		const injected = (100 * (1 / (1 + STATION_B_BIAS) - 1));
		expect(pair?.relativePct?.ciLow).toBeLessThan(injected);
		expect(pair?.relativePct?.ciHigh).toBeGreaterThan(injected);
		expect(pair?.relativePct?.ciHigh).toBeLessThan(0);
		expect(pair?.pairedT.p).toBeLessThan(0.001);
		// A capacitance ratio does not see a multiplicative bias: the pair differs by noise only.
		const ratio = study.analysis?.characteristics[3]?.correlation.value?.pairs[0]?.relativePct;
		expect(Math.abs(ratio?.mean ?? 1)).toBeLessThan(0.1);
	});

	test('finishing is audited; the PDF report names the verdict; the audit API and CSV list the study', async () => {
		expect((await fetch(`${baseUrl()}/api/v1/studies/${studyId}/report.pdf`, { headers: { cookie: engineer } })).status).toBe(409);
		const done = await fetch(`${baseUrl()}/api/v1/studies/${studyId}`, jsonInit(engineer, 'PATCH', { status: 'finished' }));
		expect(done.status).toBe(200);
		expect((await stationGet(s.first.token)).study).toBeNull();
		const late = await postStudy(s.first.token, studyBody(studyId, s.line.lotNumber, s.serials[0] ?? '', 0, 0, 0));
		expect(late.status).toBe(409);
		const study = await getStudy();
		const pdf = await fetch(`${baseUrl()}/api/v1/studies/${studyId}/report.pdf`, { headers: { cookie: engineer } });
		expect(pdf.status).toBe(200);
		expect(pdf.headers.get('content-type')).toBe('application/pdf');
		const text = (await pdfPages(new Uint8Array(await pdf.arrayBuffer()))).join(' ');
		const words = { acceptable: 'Good', conditional: 'Conditional', 'not-acceptable': 'Not acceptable', indeterminate: 'Indeterminate' } as const;
		expect(text).toContain(`Verdict: ${words[(study.analysis?.overall ?? 'indeterminate') as keyof typeof words]}`);
		expect(text).toContain('C@1V');
		expect(text).toContain(b.name);

		expect((await fetch(`${baseUrl()}/api/v1/audit`)).status).toBe(401);
		expect((await fetch(`${baseUrl()}/api/v1/audit`, { headers: { cookie: operator } })).status).toBe(403);
		expect((await fetch(`${baseUrl()}/api/v1/audit.csv`, { headers: { cookie: operator } })).status).toBe(403);
		expect((await fetch(`${baseUrl()}/api/v1/audit?from=not-a-date`, { headers: { cookie: engineer } })).status).toBe(400);
		const trail = (await (await fetch(`${baseUrl()}/api/v1/audit?entity=study&limit=500`, { headers: { cookie: engineer } })).json()) as { entries: { entityId: string; action: string; actor: string; before: unknown; after: unknown }[] };
		const mine = trail.entries.filter((e) => e.entityId === String(studyId));
		expect(mine.map((e) => e.action)).toEqual(['finish', 'start', 'create']);
		expect(mine[0]?.before).toEqual({ status: 'running' });
		expect(mine.every((e) => e.actor === 'noor.haddad@corvane.example')).toBe(true);
		const csv = await fetch(`${baseUrl()}/api/v1/audit.csv?entity=study`, { headers: { cookie: engineer } });
		expect(csv.headers.get('content-type')).toContain('text/csv');
		const lines = (await csv.text()).trim().split('\r\n');
		expect(lines[0]).toBe('id,at,actor,entity,entityId,action,before,after');
		expect(lines.some((l) => l.includes(`,study,${studyId},finish,`))).toBe(true);
	});
});

describe('the demo study', () => {
	test('a finished study of A-01 and A-02 is there on a fresh start, analysed, with A-02 reading high', async () => {
		const list = (await (await fetch(`${baseUrl()}/api/v1/studies`, { headers: { cookie: engineer } })).json()) as { studies: { id: number; name: string; status: string; stations: string[]; filled: number; total: number }[] };
		const demo = list.studies.find((x) => x.name === 'Line A after socket change');
		expect(demo?.status).toBe('finished');
		expect(demo?.stations).toEqual(['A-01', 'A-02']);
		expect(demo?.filled).toBe(60);
		const study = (await (await fetch(`${baseUrl()}/api/v1/studies/${demo?.id}`, { headers: { cookie: engineer } })).json()) as Study;
		const c1 = study.analysis?.characteristics[0];
		expect(c1?.anova.ok).toBe(true);
		// The demo injects +0.25 % on A-02: A-01 − A-02 ≈ −0.25 % with an interval that excludes 0.
		const pair = c1?.correlation.value?.pairs[0]?.relativePct;
		expect(pair?.ciHigh).toBeLessThan(0);
		expect(pair?.ciLow).toBeLessThan(-0.2);
		expect((await fetch(`${baseUrl()}/api/v1/studies/${demo?.id}/report.pdf`, { headers: { cookie: engineer } })).status).toBe(200);
	});
});
