import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { getUpload } from '$lib/server/uploads';
import type { RequestHandler } from './$types';

/** One upload's state: staged (checked, not imported) or imported. */
export const GET: RequestHandler = async ({ locals, params }) => {
	requireApiArea(locals, 'uploads');
	const upload = await getUpload(Number(params.id));
	if (!upload) error(404, 'No such upload');
	return json({ upload });
};
