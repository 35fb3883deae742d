import { error, json } from '@sveltejs/kit';
import { requireApiArea } from '$lib/server/auth';
import { revokeToken, rotateToken } from '$lib/server/stations';
import type { RequestHandler } from './$types';

/** Issues a new token (shown once); the old one stops working at once. */
export const POST: RequestHandler = async ({ locals, params }) => {
	const user = requireApiArea(locals, 'stations.manage');
	const result = await rotateToken({ userId: user.id, label: user.email }, Number(params.id));
	if (!result.ok) error(404, result.message);
	return json({ token: result.token }, { status: 201 });
};

/** Revokes the token: the station is refused from its next request on. */
export const DELETE: RequestHandler = async ({ locals, params }) => {
	const user = requireApiArea(locals, 'stations.manage');
	const result = await revokeToken({ userId: user.id, label: user.email }, Number(params.id));
	if (!result.ok) error(404, result.message);
	return new Response(null, { status: 204 });
};
