// The OpenAPI 3.1 document, generated from the same zod schemas that validate requests.
// Each endpoint registers here with an example body.
import { OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { NewUserBody, SessionUserOut, SignInBody } from '$lib/schemas/people';

const Problem = z
	.object({
		type: z.string(),
		title: z.string(),
		status: z.number().int(),
		detail: z.string(),
		errors: z.array(z.object({ path: z.string(), message: z.string() })).optional()
	})
	.meta({ id: 'Problem', description: 'RFC 9457 problem document' });

function problems(...statuses: number[]) {
	return Object.fromEntries(
		statuses.map((s) => [s, { description: `Problem (${s})`, content: { 'application/problem+json': { schema: Problem } } }])
	);
}

function build() {
	const r = new OpenAPIRegistry();
	r.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'biasline_session' });
	r.registerComponent('securitySchemes', 'station', { type: 'http', scheme: 'bearer' });

	r.registerPath({
		method: 'post',
		path: '/api/v1/session',
		summary: 'Sign in; sets the session cookie',
		request: {
			body: {
				content: {
					'application/json': { schema: SignInBody, example: { email: 'noor.haddad@corvane.example', password: 'biasline-demo' } }
				}
			}
		},
		responses: {
			200: { description: 'Signed in', content: { 'application/json': { schema: z.object({ user: SessionUserOut }) } } },
			...problems(400, 401, 429)
		}
	});
	r.registerPath({
		method: 'delete',
		path: '/api/v1/session',
		summary: 'Sign out',
		security: [{ session: [] }],
		responses: { 204: { description: 'Signed out' } }
	});
	r.registerPath({
		method: 'post',
		path: '/api/v1/users',
		summary: 'Add a person (admin)',
		security: [{ session: [] }],
		request: {
			body: {
				content: {
					'application/json': {
						schema: NewUserBody,
						example: { email: 'ivo.marek@corvane.example', name: 'Ivo Marek', role: 'operator', password: 'a-long-passphrase' }
					}
				}
			}
		},
		responses: {
			201: {
				description: 'Created',
				content: { 'application/json': { schema: z.object({ id: z.number().int(), email: z.string(), role: z.string() }) } }
			},
			...problems(400, 401, 403, 409)
		}
	});
	r.registerPath({
		method: 'get',
		path: '/api/v1/openapi.json',
		summary: 'This document',
		responses: { 200: { description: 'OpenAPI 3.1 document' } }
	});

	return new OpenApiGeneratorV31(r.definitions).generateDocument({
		openapi: '3.1.0',
		info: {
			title: 'Biasline public interface',
			version: '1.0.0',
			description: 'Station ingest, setting up, and reading. SI units in the field name’s unit; errors are RFC 9457 problem documents.'
		}
	});
}

let doc: ReturnType<typeof build> | null = null;
/** The generated document (built once per process: the schemas do not change at run time). */
export function openApiDocument() {
	doc ??= build();
	return doc;
}
