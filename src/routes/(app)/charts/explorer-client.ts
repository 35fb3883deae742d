// The explorer's reads of /api/v1/charts/{id} with a time range (failures as values).
import { CHART_POINT_LIMIT, type ApiResult, type ChartDetail } from '$lib/api/charts-client';
import { chartUrl, type Range } from './explorer';

export async function fetchDetail(id: number, view: string, range: Range): Promise<ApiResult<ChartDetail>> {
	let res: Response;
	try {
		res = await fetch(chartUrl(id, view, CHART_POINT_LIMIT, range), { headers: { accept: 'application/json' } });
	} catch {
		return { ok: false, status: 0, message: 'The server could not be reached' };
	}
	if (!res.ok) {
		const body = (await res.json().catch(() => null)) as { detail?: string; message?: string } | null;
		return { ok: false, status: res.status, message: body?.detail ?? body?.message ?? `The server answered ${res.status}` };
	}
	return { ok: true, value: (await res.json()) as ChartDetail };
}
