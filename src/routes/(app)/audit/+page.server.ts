import { requireArea } from '$lib/server/auth';
import { auditEntities, auditPage } from '$lib/server/audit-views';
import { fieldErrors } from '$lib/schemas/form';
import { queryObject } from '$lib/schemas/query';
import { AuditQuery } from '$lib/schemas/studies';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireArea(event, 'audit');
	const raw = queryObject(event.url.searchParams);
	const q = AuditQuery.safeParse(raw);
	const entities = await auditEntities();
	if (!q.success) {
		return { entities, filter: raw, errors: fieldErrors(q.error), total: 0, entries: [], limit: 50, offset: 0 };
	}
	const page = await auditPage(q.data);
	return { entities, filter: raw, errors: {} as Record<string, string>, ...page, limit: q.data.limit, offset: q.data.offset };
};

// Read-only: this page has no actions; the table itself refuses UPDATE and DELETE.
