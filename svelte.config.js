import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: adapter({ out: process.env.BIASLINE_BUILD_DIR || 'build' }),
		// A build for tests keeps its intermediate files apart, so it never races another build.
		outDir: process.env.BIASLINE_KIT_DIR || '.svelte-kit',
		// Forms are posted by the same origin only; stations use bearer tokens on +server.ts routes.
		csrf: { trustedOrigins: [] }
	}
};

export default config;
