// The one browser client of the chart endpoints: typed reads of /api/v1/charts with the
// session cookie. Failures come back as values so a screen can say what went wrong.
import type { ChartDetail, ChartSummary } from '$lib/server/charts';
import type { ChartViewId } from '$lib/schemas/charts-ui';

export type { ChartDetail, ChartSummary };
export type ApiResult<T> = { ok: true; value: T } | { ok: false; status: number; message: string };

/** Points asked for per chart view; the endpoint returns the newest ones. */
export const CHART_POINT_LIMIT = 500;

async function getJson<T>(fetcher: typeof fetch, url: string): Promise<ApiResult<T>> {
	let res: Response;
	try {
		res = await fetcher(url, { headers: { accept: 'application/json' } });
	} catch {
		return { ok: false, status: 0, message: 'The server could not be reached' };
	}
	if (!res.ok) {
		const body: unknown = await res.json().catch(() => null);
		const detail = body && typeof body === 'object' && 'detail' in body && typeof body.detail === 'string' ? body.detail : null;
		const title = body && typeof body === 'object' && 'message' in body && typeof body.message === 'string' ? body.message : null;
		return { ok: false, status: res.status, message: detail ?? title ?? `The server answered ${res.status}` };
	}
	return { ok: true, value: (await res.json()) as T };
}

export async function fetchCharts(filter: { station?: string; product?: string; kind?: string } = {}, fetcher: typeof fetch = fetch): Promise<ApiResult<ChartSummary[]>> {
	const q = new URLSearchParams();
	for (const [k, v] of Object.entries(filter)) if (v) q.set(k, v);
	const r = await getJson<{ charts: ChartSummary[] }>(fetcher, `/api/v1/charts${q.size ? `?${q}` : ''}`);
	return r.ok ? { ok: true, value: r.value.charts } : r;
}

export async function fetchChart(id: number, view: ChartViewId, fetcher: typeof fetch = fetch): Promise<ApiResult<ChartDetail>> {
	return getJson<ChartDetail>(fetcher, `/api/v1/charts/${id}?view=${view}&limit=${CHART_POINT_LIMIT}`);
}
