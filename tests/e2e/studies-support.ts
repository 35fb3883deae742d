// A study line for the study tests: the shared test line (product, calibrated station, lot) plus
// more calibrated stations, production parts in the lot spread across the product's range, and a
// station that measures whatever part GET /api/v1/station names, with a little per-trial noise.
import { randomUUID } from 'node:crypto';
import { expect } from 'vitest';
import { gauss, prng } from '../support/prng';
import { baseUrl } from './helpers';
import { addCalibratedStation, setUpLine, TEST_FIXTURE, type TestLine } from './line';
import { abruptPartF, pF, resonanceHz } from './physics';

export const STUDY_BIASES = [1, 4, 25];
export const STUDY_PLAN = {
	points: [
		{ biasV: 1, minF: 24 * pF, maxF: 31 * pF },
		{ biasV: 4, minF: 14 * pF, maxF: 19 * pF },
		{ biasV: 25, minF: 5.5 * pF, maxF: 7.5 * pF }
	],
	ratio: { lowBiasV: 1, highBiasV: 25, min: 3.5, max: 4.8 }
};

export type StudyStation = { name: string; token: string; biasRel: number };

/** Adds a calibrated station with the test fixture; returns its name and token. */
export async function addStation(name: string, biasRel = 0): Promise<StudyStation> {
	return { name, token: await addCalibratedStation(name), biasRel };
}

export type StudyLine = {
	line: TestLine;
	serials: string[];
	/** True relative deviation of each part from the test junction. */
	partRel: Map<string, number>;
	first: StudyStation;
};

/** The line with `parts` production parts whose sizes spread over about ±2.5 %. */
export async function setUpStudyLine(prefix: string, parts: number): Promise<StudyLine> {
	const line = await setUpLine({ prefix, plan: STUDY_PLAN, biases: STUDY_BIASES });
	const rels = Array.from({ length: parts }, (_, i) => -0.025 + (0.05 * i) / Math.max(1, parts - 1));
	const tested = rels.map((r) => line.part(r));
	await line.post(tested);
	const partRel = new Map(tested.map((p, i) => [p.serial, rels[i] ?? 0]));
	return { line, serials: tested.map((p) => p.serial), partRel, first: { name: line.stationName, token: line.token, biasRel: 0 } };
}

export const stationGet = async (token: string) => {
	const res = await fetch(`${baseUrl()}/api/v1/station`, { headers: { authorization: `Bearer ${token}` } });
	expect(res.status).toBe(200);
	return (await res.json()) as { study: { id: number; next: { serial: string; lot: string; trial: number } | null; biasV: number[] } | null };
};

/** The body a station posts for one study measurement: the part's true C × (1 + station bias + noise). */
export function studyBody(study: number, lot: string, serial: string, rel: number, biasRel: number, noiseRel: number) {
	return {
		lot,
		study,
		units: [
			{
				serial,
				testedAt: new Date().toISOString(),
				points: STUDY_BIASES.map((v) => ({ biasV: v, resonanceHz: resonanceHz(TEST_FIXTURE, abruptPartF(v) * (1 + rel) * (1 + biasRel + noiseRel)) }))
			}
		]
	};
}

export const postStudy = (token: string, body: unknown, key: string = randomUUID()) =>
	fetch(`${baseUrl()}/api/v1/results`, {
		method: 'POST',
		headers: { 'content-type': 'application/json', authorization: `Bearer ${token}`, 'idempotency-key': key },
		body: JSON.stringify(body)
	});

/**
 * Each station in turn asks what to measure and posts it, until no station is told a part.
 * Per-trial noise: 0.05 % (one standard deviation) from a seeded PRNG. Returns the posts made.
 */
export async function measureAll(s: StudyLine, stations: StudyStation[], seed = 7): Promise<number> {
	const rand = prng(seed);
	let posts = 0;
	for (let round = 0; round < 1000; round++) {
		let any = false;
		for (const st of stations) {
			const view = await stationGet(st.token);
			const next = view.study?.next;
			if (!view.study || !next) continue;
			any = true;
			const res = await postStudy(st.token, studyBody(view.study.id, next.lot, next.serial, s.partRel.get(next.serial) ?? 0, st.biasRel, 0.0005 * gauss(rand)));
			expect(res.status).toBe(201);
			posts++;
		}
		if (!any) break;
	}
	return posts;
}
