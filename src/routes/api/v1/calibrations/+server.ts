import { json } from '@sveltejs/kit';
import { requireStation } from '$lib/server/auth';
import { calibrateStation } from '$lib/server/calibrations';
import { problem, readJson } from '$lib/server/problem';
import { stationOverLimit } from '$lib/server/ratelimit';
import { issueList } from '$lib/schemas/form';
import { CalibrationBody } from '$lib/schemas/station-api';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = async ({ request, locals }) => {
	const station = requireStation(locals);
	const wait = await stationOverLimit(station);
	if (wait !== null) return problem(429, 'Too many requests from this station', { headers: { 'retry-after': String(wait) } });
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = CalibrationBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const outcome = await calibrateStation(station.id, parsed.data.references, new Date());
	if (!outcome.ok) return problem(outcome.status, outcome.detail, { kind: outcome.kind });
	const c = outcome.calibration;
	return json({ inductanceH: c.inductanceH, strayF: c.strayF, residualPpm: c.residualPpm, at: c.at, validUntil: c.validUntil }, { status: 201 });
};
