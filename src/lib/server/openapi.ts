// The OpenAPI 3.1 document, generated from the same zod schemas that validate requests.
// Each endpoint registers here with an example body.
import { OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { NewUserBody, SessionUserOut, SignInBody } from '$lib/schemas/people';
import { LotBody, LotStatusBody, ProductBody, StationBody } from '$lib/schemas/setup';
import { CalibrationBody, ResultsBody } from '$lib/schemas/station-api';
import { UnitsBySerialQuery, UploadQuery } from '$lib/schemas/uploads';
import { CertificateMailBody, DispositionBody, MatchedSetsBody, PartsQueryDoc, SetsQuery } from '$lib/schemas/lots';
import { AlarmChangeBody, AlarmsQuery, ChartQuery, ChartsQuery, RecomputeLimitsBody, UnitsQuery } from '$lib/schemas/query';
import { AuditQuery, StudyBody, StudyPatchBody } from '$lib/schemas/studies';

const Problem = z
	.object({
		type: z.string(),
		title: z.string(),
		status: z.number().int(),
		detail: z.string(),
		errors: z.array(z.object({ path: z.string(), message: z.string() })).optional()
	})
	.meta({ id: 'Problem', description: 'RFC 9457 problem document' });

function problems(...statuses: number[]) {
	return Object.fromEntries(
		statuses.map((s) => [s, { description: `Problem (${s})`, content: { 'application/problem+json': { schema: Problem } } }])
	);
}

function build() {
	const r = new OpenAPIRegistry();
	r.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'biasline_session' });
	r.registerComponent('securitySchemes', 'station', { type: 'http', scheme: 'bearer' });

	r.registerPath({
		method: 'post',
		path: '/api/v1/session',
		summary: 'Sign in; sets the session cookie',
		request: {
			body: {
				content: {
					'application/json': { schema: SignInBody, example: { email: 'noor.haddad@corvane.example', password: 'biasline-demo' } }
				}
			}
		},
		responses: {
			200: { description: 'Signed in', content: { 'application/json': { schema: z.object({ user: SessionUserOut }) } } },
			...problems(400, 401, 429)
		}
	});
	r.registerPath({
		method: 'delete',
		path: '/api/v1/session',
		summary: 'Sign out',
		security: [{ session: [] }],
		responses: { 204: { description: 'Signed out' } }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/users',
		summary: 'Add a person (admin)',
		security: [{ session: [] }],
		request: {
			body: {
				content: {
					'application/json': {
						schema: NewUserBody,
						example: { email: 'ivo.marek@corvane.example', name: 'Ivo Marek', role: 'operator', password: 'a-long-passphrase' }
					}
				}
			}
		},
		responses: {
			201: {
				description: 'Created',
				content: { 'application/json': { schema: z.object({ id: z.number().int(), email: z.string(), role: z.string() }) } }
			},
			...problems(400, 401, 403, 409)
		}
	});

	const pF = 1e-12;
	const examplePlan = {
		points: [{ biasV: 1, minF: 24.6 * pF, maxF: 28.4 * pF }, { biasV: 4 }, { biasV: 25, minF: 6.6 * pF, maxF: 7.7 * pF }],
		ratio: { lowBiasV: 1, highBiasV: 25, min: 3.4 },
		q: { biasV: 1, min: 150 },
		leakage: { biasV: 25, maxA: 1e-8 },
		matching: { setSize: 2, tolerancePct: 2.0 }
	};
	const jsonBody = (schema: z.ZodType, example: unknown) => ({ body: { content: { 'application/json': { schema, example } } } });
	const ok = (description: string, example?: unknown) => ({ description, content: { 'application/json': { schema: z.object({}).loose(), ...(example ? { example } : {}) } } });

	r.registerPath({
		method: 'get',
		path: '/api/v1/products',
		summary: 'Products with their current plan (engineer, admin)',
		security: [{ session: [] }],
		responses: { 200: ok('Products'), ...problems(401, 403) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/products',
		summary: 'Add a product with its spec plan, version 1 (engineer, admin)',
		security: [{ session: [] }],
		request: jsonBody(ProductBody, { code: 'KV-1405', name: 'Abrupt-junction varactor', family: 'abrupt', plan: examplePlan }),
		responses: { 201: ok('Created', { id: 3, code: 'KV-1405', planVersion: 1 }), ...problems(400, 401, 403, 409) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/stations',
		summary: 'Add a test station; the token is shown this once (admin)',
		security: [{ session: [] }],
		request: jsonBody(StationBody, { name: 'A-04', line: 'Line A', fixture: { inductanceH: 1e-4, strayF: 3e-12, blockingF: 1e-7, arrangement: 'single' } }),
		responses: { 201: ok('Created', { id: 7, name: 'A-04', token: 'bst_…' }), ...problems(400, 401, 403, 409) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/stations/{id}/token',
		summary: 'Issue a new station token (shown once); the old one stops working (admin)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }) },
		responses: { 201: ok('New token', { token: 'bst_…' }), ...problems(401, 403, 404) }
	});
	r.registerPath({
		method: 'delete',
		path: '/api/v1/stations/{id}/token',
		summary: 'Revoke the station token at once (admin)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }) },
		responses: { 204: { description: 'Revoked' }, ...problems(401, 403, 404) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/lots',
		summary: 'Open a lot of a product (operator and up)',
		security: [{ session: [] }],
		request: jsonBody(LotBody, { number: 'LT-26-1201', productCode: 'KV-1405', quantity: 5000 }),
		responses: { 201: ok('Opened'), ...problems(400, 401, 403, 409) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}',
		summary: 'A lot with its yield and bin counts (production parts only)',
		security: [{ session: [] }],
		request: { params: z.object({ number: z.string() }) },
		responses: { 200: ok('Lot summary', { lot: { number: 'LT-26-1187' }, tested: 120, passed: 114, yieldPct: 95, bins: { '1': 114, '2': 6 } }), ...problems(401, 403, 404) }
	});
	r.registerPath({
		method: 'patch',
		path: '/api/v1/lots/{number}',
		summary: 'Close or reopen a lot (operator and up); a closed lot refuses results',
		security: [{ session: [] }],
		request: { params: z.object({ number: z.string() }), ...jsonBody(LotStatusBody, { status: 'closed' }) },
		responses: { 200: ok('Lot summary'), ...problems(400, 401, 403, 404, 409) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}/units',
		summary: 'A page of the lot’s parts, newest first',
		security: [{ session: [] }],
		request: { params: z.object({ number: z.string() }), query: UnitsQuery },
		responses: { 200: ok('Parts', { total: 1, units: [] }), ...problems(400, 401, 403, 404) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}/units.csv',
		summary: 'The lot’s parts as CSV (RFC 4180), SI units',
		security: [{ session: [] }],
		request: { params: z.object({ number: z.string() }), query: UnitsQuery },
		responses: { 200: { description: 'CSV', content: { 'text/csv': { schema: z.string() } } }, ...problems(400, 401, 403, 404) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/station',
		summary: 'The calling station: fixture, calibration in force, current lot and its plan',
		security: [{ station: [] }],
		responses: { 200: ok('The station’s view of itself'), ...problems(401) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/calibrations',
		summary: 'Calibrate the fixture from reference capacitors placed alone in the socket',
		security: [{ station: [] }],
		request: jsonBody(CalibrationBody, {
			references: [
				{ capacitanceF: 1.0e-11, resonanceHz: 4.4143e6 },
				{ capacitanceF: 4.7e-11, resonanceHz: 2.2513e6 },
				{ capacitanceF: 1.0e-10, resonanceHz: 1.569e6 },
				{ capacitanceF: 2.2e-10, resonanceHz: 1.0669e6 }
			]
		}),
		responses: { 201: ok('Calibration in force', { inductanceH: 1e-4, strayF: 3e-12, residualPpm: 12, validUntil: '2026-03-02T15:15:00.000Z' }), ...problems(400, 401, 409, 429) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/results',
		summary: 'Post tested units (1 to 500); each is judged and answered with a bin',
		security: [{ station: [] }],
		request: {
			headers: z.object({ 'Idempotency-Key': z.string().min(1).max(255) }),
			...jsonBody(ResultsBody, {
				lot: 'LT-26-1187',
				units: [
					{
						serial: 'LT-26-1187-A-01-000123',
						testedAt: '2026-03-02T07:15:00.000Z',
						kind: 'production',
						temperatureC: 24.8,
						leakageA: 2.1e-10,
						points: [
							{ biasV: 1, resonanceHz: 2.9313e6, bandwidthHz: 1.17e4 },
							{ biasV: 4, resonanceHz: 3.633e6, bandwidthHz: 1.26e4 },
							{ biasV: 25, resonanceHz: 5.0015e6, bandwidthHz: 1.51e4 }
						]
					}
				]
			})
		},
		responses: {
			201: ok('Judged and stored', { results: [{ serial: 'LT-26-1187-A-01-000123', bin: 1, pass: true, capacitanceF: [2.65e-11, 1.62e-11, 7.1e-12], q: [250, 289, 332], fit: null, failures: [] }] }),
			200: { description: 'Replay of a stored answer (header Idempotent-Replayed: true)' },
			...problems(400, 401, 404, 409, 413, 429)
		}
	});

	r.registerPath({
		method: 'get',
		path: '/api/v1/alarms',
		summary: 'Alarms, newest first, filtered by status, station, product or lot',
		security: [{ session: [] }],
		request: { query: AlarmsQuery },
		responses: {
			200: ok('Alarms', { alarms: [{ id: 12, rule: 'WE1', chart: { characteristic: 'C@1V', kind: 'production' }, station: 'A-02', status: 'open', suspect: 'product', at: '2026-03-02T07:15:00.000Z' }] }),
			...problems(400, 401)
		}
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/alarms/{id}',
		summary: 'One alarm with its reasoning and history',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }) },
		responses: { 200: ok('Alarm'), ...problems(401, 404) }
	});
	r.registerPath({
		method: 'patch',
		path: '/api/v1/alarms/{id}',
		summary: 'Acknowledge (operator and up) or close with cause and action (engineer and up)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }), ...jsonBody(AlarmChangeBody, { status: 'closed', cause: 'Socket contamination', action: 'Cleaned the socket; reference part re-measured in control' }) },
		responses: { 200: ok('Changed alarm'), ...problems(400, 401, 403, 404, 409) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/charts',
		summary: 'Control charts per station × product × characteristic (engineer, admin)',
		security: [{ session: [] }],
		request: { query: ChartsQuery },
		responses: { 200: ok('Charts', { charts: [{ id: 3, station: 'A-01', productCode: 'KV-1405', kind: 'production', characteristic: 'C@1V', unit: 'pF', status: 'active', pointCount: 420 }] }), ...problems(400, 401, 403) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/charts/{id}',
		summary: 'A chart: points, frozen limits, the chosen view (imr, xbar-r, xbar-s, ewma, cusum, p) and capability',
		description:
			'shape=rows (default) gives a record per point. shape=columns gives the same answer with the points as lists (seq, value, at in epoch ms, unitId, limitsVersion; rules only for the points that broke a rule, keyed by seq; no serials) and each list of records in data as a record of lists; about a third of the size, for long ranges (limit up to 100 000). Server-Timing says where its time went.',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }), query: ChartQuery },
		responses: {
			200: ok('Chart detail', {
				chart: { id: 3, station: 'A-01', characteristic: 'C@1V', unit: 'pF' },
				points: { seq: [418, 419], value: [27.31, 27.36], at: [1764633600000, 1764633601250], unitId: [90211, 90212], limitsVersion: [1, 1], rules: { '419': ['WE1'] } },
				data: { view: 'imr', movingRange: { seq: [418, 419], value: [null, 0.05] } }
			}),
			...problems(400, 401, 403, 404)
		}
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/charts/{id}/limits',
		summary: 'Recompute the limits from a range of points with exclusions (engineer; versioned and audited)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }), ...jsonBody(RecomputeLimitsBody, { fromSeq: 0, toSeq: 50, exclusions: [{ seq: 17, reason: 'Bent lead, retested' }], reason: 'New fixture socket' }) },
		responses: { 201: ok('New limits version', { ok: true, version: 2 }), ...problems(400, 401, 403, 404) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/floor',
		summary: 'The floor: a tile per station and totals per line',
		security: [{ session: [] }],
		responses: { 200: ok('Floor view'), ...problems(401) }
	});
	for (const method of ['get', 'post'] as const) {
		r.registerPath({
			method,
			path: '/api/v1/stream',
			summary: 'Server-sent events unit, yield and alarm; each has an id; reconnect with Last-Event-ID to receive what was missed',
			security: [{ session: [] }],
			request: { query: z.object({ lot: z.string().optional(), station: z.string().optional() }), headers: z.object({ 'Last-Event-ID': z.string().optional() }) },
			responses: { 200: { description: 'text/event-stream', content: { 'text/event-stream': { schema: z.string() } } }, ...problems(401, 404) }
		});
	}
	// Measurement-system studies (engineer, admin) and the audit trail.
	r.registerPath({
		method: 'get',
		path: '/api/v1/studies',
		summary: 'Measurement-system studies, newest first, with their progress (engineer, admin)',
		security: [{ session: [] }],
		responses: { 200: ok('Studies', { studies: [{ id: 4, name: 'Line A after socket change', productCode: 'KV-1405', status: 'running', parts: 10, stations: ['A-01', 'A-02'], trials: 3, filled: 27, total: 60 }] }), ...problems(401, 403) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/studies',
		summary: 'Create a draft study: parts (serial and lot), stations in place of appraisers, trials (engineer, admin; audited)',
		security: [{ session: [] }],
		request: jsonBody(StudyBody, {
			productCode: 'KV-1405',
			name: 'Line A after socket change',
			parts: [
				{ serial: 'LT-26-1187-A-01-000101', lot: 'LT-26-1187' },
				{ serial: 'LT-26-1187-A-01-000102', lot: 'LT-26-1187' }
			],
			stations: ['A-01', 'A-02'],
			trials: 3,
			multiplier: 6
		}),
		responses: { 201: ok('Draft study'), ...problems(400, 401, 403) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/studies/{id}',
		summary: 'A study: parts, stations, progress grid, and once every cell is filled the analysis per characteristic (ANOVA, average and range, station correlation, plot series, verdict)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }) },
		responses: { 200: ok('Study'), ...problems(400, 401, 403, 404) }
	});
	r.registerPath({
		method: 'patch',
		path: '/api/v1/studies/{id}',
		summary: "Start a draft ('running') or finish a complete running study ('finished') (engineer, admin; audited)",
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }), ...jsonBody(StudyPatchBody, { status: 'running' }) },
		responses: { 200: ok('Changed study'), ...problems(400, 401, 403, 404, 409) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/studies/{id}/report.pdf',
		summary: 'PDF report of a finished study (engineer, admin)',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.string() }) },
		responses: { 200: { description: 'application/pdf', content: { 'application/pdf': { schema: z.string() } } }, ...problems(400, 401, 403, 404, 409) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/audit',
		summary: 'Audit entries, newest first, filtered by entity type, actor and time range, a page at a time (engineer, admin; read-only)',
		security: [{ session: [] }],
		request: { query: AuditQuery },
		responses: { 200: ok('Audit entries', { total: 1, entries: [{ id: 7, at: '2026-03-02T07:15:00.000Z', actor: 'noor.haddad@corvane.example', entity: 'study', entityId: '4', action: 'start', before: { status: 'draft' }, after: { status: 'running' } }] }), ...problems(400, 401, 403) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/audit.csv',
		summary: 'The same selection as CSV, oldest first (engineer, admin)',
		security: [{ session: [] }],
		request: { query: AuditQuery.omit({ limit: true, offset: true }) },
		responses: { 200: { description: 'text/csv', content: { 'text/csv': { schema: z.string() } } }, ...problems(400, 401, 403) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/units',
		summary: 'Parts with a serial (each test of it), newest first',
		security: [{ session: [] }],
		request: { query: UnitsBySerialQuery },
		responses: { 200: ok('Parts', { units: [{ id: 1, serial: 'LT-26-1187-0001', lot: 'LT-26-1187', kind: 'production', source: 'station', bin: 1, pass: true }] }), ...problems(400, 401, 403) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/units/{id}',
		summary: 'One tested part (SI): sweep, fit, bin and failures, the plan windows and the calibration used',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.number().int() }) },
		responses: { 200: ok('The part', { part: { id: 1, serial: 'LT-26-1187-0001', kind: 'production', bin: 1, pass: true, sweep: [{ biasV: 1, resonanceHz: 2.71e6, bandwidthHz: null, capacitanceF: 3.1e-11, q: null }] } }), ...problems(401, 403, 404) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/uploads',
		summary: 'Bench files imported lately',
		security: [{ session: [] }],
		responses: { 200: ok('Uploads', { uploads: [] }), ...problems(401, 403) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/uploads',
		summary: 'Check a bench C–V file (CSV: serial,biasV,capacitanceF[,q][,leakageA][,temperatureC][,testedAt]) for a lot and stage it; any bad row stores nothing',
		security: [{ session: [] }],
		request: {
			query: UploadQuery,
			body: { content: { 'text/csv': { schema: z.string(), example: 'serial,biasV,capacitanceF\nB-0001,1,3.02e-11\nB-0001,4,1.81e-11\n' } } }
		},
		responses: {
			201: ok('Staged: preview, parts and their bins', { upload: { id: 7, lot: 'LT-26-1187', fileName: 'bench.csv', status: 'staged', rows: 2, parts: 1 }, bins: [{ bin: 1, count: 1 }] }),
			...problems(400, 401, 403, 404, 409, 413, 415)
		}
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/uploads/{id}',
		summary: 'One upload: staged or imported',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.number().int() }) },
		responses: { 200: ok('The upload'), ...problems(401, 403, 404) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/uploads/{id}/import',
		summary: 'Import a staged upload as bench parts in one transaction; NDJSON progress lines, the last one after the commit',
		security: [{ session: [] }],
		request: { params: z.object({ id: z.number().int() }) },
		responses: { 200: { description: 'application/x-ndjson', content: { 'application/x-ndjson': { schema: z.string() } } }, ...problems(401, 403, 404, 409) }
	});
	// The lot page: parts table, hold and release, matched sets, certificate.
	const lotParam = z.object({ number: z.string() });
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}/parts',
		summary: 'The lot’s parts sorted (serial, tested, bin, station, c1…c20 = capacitance at plan point n) and filtered, 50 a page by keyset: pass `next` as `after`, `prev` as `before`',
		security: [{ session: [] }],
		request: { params: lotParam, query: PartsQueryDoc },
		responses: {
			200: ok('A page of parts', { biasV: [1, 4, 25], rows: [{ id: 812, serial: 'LT-26-1187-000812', kind: 'production', station: 'A-01', testedAt: '2026-12-01T08:15:00.000Z', bin: 1, pass: true, capacitanceF: [3.1e-11, 1.6e-11, 2.5e-12] }], next: 'WyJMVC0yNi0xMTg3LTAwMDgxMiIsODEyXQ', prev: null, total: 4212, totalCapped: false, unknownStation: false }),
			...problems(400, 401, 403, 404)
		}
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/lots/{number}/disposition',
		summary: 'Hold or release the lot with a reason (engineer, admin; audited). Release needs a closed lot; holding does not stop testing',
		security: [{ session: [] }],
		request: { params: lotParam, ...jsonBody(DispositionBody, { disposition: 'held', reason: 'C at 25 V drifting high on A-02; waiting for the correlation study' }) },
		responses: { 200: ok('Lot summary'), ...problems(400, 401, 403, 404, 409, 415) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}/matched-sets',
		summary: 'The lot’s current matched-set build and a page of its sets with member serials',
		security: [{ session: [] }],
		request: { params: lotParam, query: SetsQuery },
		responses: {
			200: ok('Sets', { build: { id: 3, setSize: 2, tolerancePct: 1, candidates: 4012, setCount: 1990, unmatched: 32, builtAt: '2026-12-01T09:00:00.000Z', builtBy: 'Noor Haddad' }, sets: [{ seq: 1, spreadPct: 0.21, members: [{ unitId: 812, serial: 'LT-26-1187-000812' }, { unitId: 97, serial: 'LT-26-1187-000097' }] }] }),
			...problems(400, 401, 403, 404)
		}
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/lots/{number}/matched-sets',
		summary: 'Build matched sets from the lot’s good parts (engineer, admin; audited); replaces the current build',
		security: [{ session: [] }],
		request: { params: lotParam, ...jsonBody(MatchedSetsBody, { setSize: 2, tolerancePct: 1 }) },
		responses: { 201: ok('The new build'), ...problems(400, 401, 403, 404, 409, 415) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/lots/{number}/certificate.pdf',
		summary: 'Certificate of conformance as PDF (engineer, admin); only for a released lot (409 otherwise)',
		security: [{ session: [] }],
		request: { params: lotParam },
		responses: { 200: { description: 'PDF', content: { 'application/pdf': { schema: z.string() } } }, ...problems(401, 403, 404, 409) }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/lots/{number}/certificate/mail',
		summary: 'E-mail the certificate (PDF attached) to a customer contact through the mail queue (engineer, admin; audited); only for a released lot',
		security: [{ session: [] }],
		request: { params: lotParam, ...jsonBody(CertificateMailBody, { to: 'incoming.quality@customer.example', contact: 'A. Lindqvist', note: 'Shipment 44, two reels' }) },
		responses: { 202: ok('Queued', { queued: 57, to: 'incoming.quality@customer.example' }), ...problems(400, 401, 403, 404, 409, 415) }
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/openapi.json',
		summary: 'This document',
		responses: { 200: { description: 'OpenAPI 3.1 document' } }
	});

	return new OpenApiGeneratorV31(r.definitions).generateDocument({
		openapi: '3.1.0',
		info: {
			title: 'Biasline public interface',
			version: '1.0.0',
			description: 'Station ingest, setting up, and reading. SI units in the field name’s unit; errors are RFC 9457 problem documents.'
		}
	});
}

let doc: ReturnType<typeof build> | null = null;
/** The generated document (built once per process: the schemas do not change at run time). */
export function openApiDocument() {
	doc ??= build();
	return doc;
}
