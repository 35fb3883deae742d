import { requireApiArea } from '$lib/server/auth';
import { lotCertificate } from '$lib/server/certificate';
import { problem } from '$lib/server/problem';
import type { RequestHandler } from './$types';

/** The certificate of conformance as PDF (engineer, admin); 409 unless the lot is released. */
export const GET: RequestHandler = async ({ locals, params }) => {
	const user = requireApiArea(locals, 'lots.disposition');
	const cert = await lotCertificate(params.number, user, new Date());
	if (!cert.ok) return problem(cert.status, cert.message, cert.status === 409 ? { kind: 'lot-not-released' } : {});
	return new Response(new Uint8Array(cert.bytes), {
		headers: {
			'content-type': 'application/pdf',
			'content-disposition': `attachment; filename="${cert.filename}"`,
			'cache-control': 'no-store'
		}
	});
};
