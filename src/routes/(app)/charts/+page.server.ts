import { fail } from '@sveltejs/kit';
import { mayUse } from '$lib/auth/roles';
import { CHART_POINT_LIMIT } from '$lib/api/charts-client';
import { resolvePick } from '$lib/api/chart-selection';
import { requireArea } from '$lib/server/auth';
import { chartDetail, listCharts, recomputeLimits } from '$lib/server/charts';
import { ChartsPageQuery, recomputeInput } from '$lib/schemas/charts-ui';
import { siblings } from './explorer';
import { fieldErrors, formObject } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireArea(event, 'charts');
	// The query only seeds the first render; later picks fetch from the JSON API in the browser
	// and only replace the URL, so changing it must not run this load again.
	const q = ChartsPageQuery.parse(event.untrack(() => queryObject(event.url.searchParams)));
	const charts = await listCharts();
	const pick = resolvePick(charts, q);
	const range = { from: q.from, to: q.to };
	const detail = pick ? await chartDetail(pick.chart.id, q.view, { limit: CHART_POINT_LIMIT, ...range }) : null;
	// Side by side: the same characteristic at the stations named in the URL.
	const side = pick ? siblings(charts, pick).filter((c) => q.stations?.some((s) => s.toLowerCase() === c.station.toLowerCase())) : [];
	const sideDetails = (await Promise.all(side.map((c) => chartDetail(c.id, q.view, { limit: CHART_POINT_LIMIT, ...range })))).filter((d) => d !== null);
	return {
		charts,
		pick,
		view: q.view,
		detail,
		range,
		side: { stations: side.map((c) => c.station), shared: q.shared === '1' },
		sideDetails,
		mayManage: mayUse(user.role, 'charts.manage')
	};
};

export const actions: Actions = {
	limits: async (event) => {
		const user = requireArea(event, 'charts.manage');
		const form = formObject(await event.request.formData());
		const chartId = Number(form.chartId);
		const { parsed, rowOf } = recomputeInput(form);
		if (!parsed.success) {
			const errors: Record<string, string> = {};
			for (const [key, message] of Object.entries(fieldErrors(parsed.error))) {
				const m = /^exclusions\.(\d+)\.(\w+)$/.exec(key);
				errors[m ? `exclusions.${rowOf[Number(m[1])] ?? m[1]}.${m[2]}` : key] = message;
			}
			return fail(400, { action: 'limits', chartId, errors });
		}
		if (!Number.isInteger(chartId) || chartId <= 0) return fail(400, { action: 'limits', chartId, errors: { _: 'No chart chosen' } });
		const result = await recomputeLimits({ userId: user.id, label: user.email }, chartId, parsed.data);
		if (!result.ok) {
			// Put the server's refusal beside the field it is about.
			const outside = /^Point (\d+) is not in the chosen range/.exec(result.message);
			const row = outside ? parsed.data.exclusions.findIndex((e) => e.seq === Number(outside[1])) : -1;
			const key = row >= 0 ? `exclusions.${rowOf[row] ?? row}.seq` : /points$/.test(result.message) ? 'lastSeq' : '_';
			return fail(result.status, { action: 'limits', chartId, errors: { [key]: result.message } });
		}
		return { action: 'limits', chartId, errors: {}, done: `Limits version ${result.version} frozen; rule checks restart against them.` };
	}
};
