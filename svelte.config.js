import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: adapter({ out: process.env.BIASLINE_BUILD_DIR || 'build' }),
		// Forms are posted by the same origin only; stations use bearer tokens on +server.ts routes.
		csrf: { trustedOrigins: [] }
	}
};

export default config;
