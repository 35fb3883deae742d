import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { watch: { ignored: ['**/.data/**', '**/.test-data/**', '**/build/**'] } },
	test: {
		// Four projects: pure unit tests beside the code, integration tests against a real
		// PostgreSQL (DATABASE_URL set by src/ops/test.mjs), browser tests against the built server, and
		// fault tests (below).
		projects: [
			{
				extends: true,
				test: { name: 'unit', include: ['src/**/*.test.ts', 'station-sim/**/*.test.{ts,js,mjs}'], environment: 'node' }
			},
			{
				extends: true,
				test: {
					name: 'integration',
					include: ['tests/integration/**/*.test.ts'],
					environment: 'node',
					fileParallelism: false,
					testTimeout: 30_000,
					hookTimeout: 60_000
				}
			},
			{
				extends: true,
				test: {
					name: 'e2e',
					include: ['tests/e2e/**/*.test.ts'],
					environment: 'node',
					fileParallelism: false,
					testTimeout: 60_000,
					hookTimeout: 120_000
				}
			},
			{
				// Fault tests (run last by src/ops/test.mjs): each file starts, kills and stops app
				// instances and a PostgreSQL cluster of its own; bounded in time.
				extends: true,
				test: {
					name: 'faults',
					include: ['tests/faults/**/*.test.ts'],
					environment: 'node',
					fileParallelism: false,
					testTimeout: 300_000,
					hookTimeout: 120_000
				}
			}
		]
	}
});
