import { json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { mailCertificate } from '$lib/server/certificate';
import { problem, readJson } from '$lib/server/problem';
import { issueList } from '$lib/schemas/form';
import { CertificateMailBody } from '$lib/schemas/lots';
import type { RequestHandler } from './$types';

/** Queues the certificate for a customer address (engineer, admin; audited); 409 unless the lot is released. */
export const POST: RequestHandler = async ({ locals, params, request }) => {
	const user = requireApiArea(locals, 'lots.disposition');
	const body = await readJson(request);
	if (!body.ok) return body.response;
	const parsed = CertificateMailBody.safeParse(body.value);
	if (!parsed.success) return problem(400, 'Check the fields listed in errors', { errors: issueList(parsed.error) });
	const result = await mailCertificate(user, params.number, parsed.data, new Date());
	if (!result.ok) return problem(result.status, result.message, result.status === 409 ? { kind: 'lot-not-released' } : {});
	return json({ queued: result.queueId, to: parsed.data.to }, { status: 202 });
};
