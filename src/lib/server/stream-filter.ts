// The stream's optional narrowing: ?lot=<number> or ?station=<name>, resolved to ids.
import { QueryTypes } from 'sequelize';
import { z } from 'zod';
import { db } from './db';

const Query = z.object({ lot: z.string().trim().min(1).max(40).optional(), station: z.string().trim().min(1).max(40).optional() });

export type StreamFilter = { ok: true; lotId?: number; stationId?: number } | { ok: false; status: 400 | 404; message: string };

export async function streamFilter(params: URLSearchParams): Promise<StreamFilter> {
	const q = Query.safeParse({ lot: params.get('lot') ?? undefined, station: params.get('station') ?? undefined });
	if (!q.success) return { ok: false, status: 400, message: 'lot and station are names of up to 40 characters' };
	const out: StreamFilter = { ok: true };
	if (q.data.lot) {
		const rows = await db().query<{ id: string }>('SELECT id FROM lots WHERE number = :n', { replacements: { n: q.data.lot }, type: QueryTypes.SELECT });
		if (!rows[0]) return { ok: false, status: 404, message: `No lot ${q.data.lot}` };
		out.lotId = Number(rows[0].id);
	}
	if (q.data.station) {
		const rows = await db().query<{ id: string }>('SELECT id FROM stations WHERE lower(name) = lower(:n)', { replacements: { n: q.data.station }, type: QueryTypes.SELECT });
		if (!rows[0]) return { ok: false, status: 404, message: `No station ${q.data.station}` };
		out.stationId = Number(rows[0].id);
	}
	return out;
}
