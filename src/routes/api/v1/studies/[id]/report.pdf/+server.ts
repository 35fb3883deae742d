import { requireApiArea } from '$lib/server/auth';
import { siteName } from '$lib/server/certificate';
import { problem } from '$lib/server/problem';
import { getStudy } from '$lib/server/studies';
import { studyReportPdf } from '$lib/server/study-report';
import { StudyId } from '$lib/schemas/studies';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'studies');
	const id = StudyId.safeParse(params.id);
	if (!id.success) return problem(400, 'Study ids are whole numbers', { errors: [{ path: 'id', message: 'not a study id' }] });
	const study = await getStudy(id.data);
	if (!study) return problem(404, `No study ${id.data}`);
	if (study.status !== 'finished' || !study.analysis) return problem(409, 'The report is made for a finished study; finish the study first');
	const pdf = await studyReportPdf(study, await siteName(), new Date());
	return new Response(new Uint8Array(pdf), {
		headers: { 'content-type': 'application/pdf', 'content-disposition': `attachment; filename="study-${study.id}-report.pdf"` }
	});
};
