import { requireArea } from '$lib/server/auth';
import { BENCH_MAX_BYTES } from '$lib/server/bench-csv';
import { listLots } from '$lib/server/catalog';
import { recentUploads } from '$lib/server/uploads';
import { queryObject } from '$lib/schemas/query';
import { UploadsPageQuery } from '$lib/schemas/uploads';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'uploads');
	const q = UploadsPageQuery.parse(queryObject(event.url.searchParams));
	const [lots, recent] = await Promise.all([listLots(), recentUploads(20)]);
	// Closed and held lots take no bench parts (the server refuses them too).
	const open = lots.filter((l) => l.status === 'open' && l.disposition !== 'held');
	const chosen = open.find((l) => l.number === q.lot)?.number ?? '';
	return { lots: open.map((l) => ({ number: l.number, productCode: l.productCode })), chosen, asked: q.lot ?? null, recent, maxBytes: BENCH_MAX_BYTES };
};
