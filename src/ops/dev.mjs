// @ts-check
// `npm run dev`: the private cluster plus Vite's dev server with hot reload.
import { spawn } from 'node:child_process';
import path from 'node:path';
import { createDatabase, dataDir, ensureCluster, ensureDependencies, root, say, sessionKey } from './lib.mjs';

ensureDependencies();
const cluster = process.env.DATABASE_URL ? null : await ensureCluster();
if (cluster) await createDatabase(cluster.url('postgres'), 'biasline');
const env = {
	...process.env,
	DATABASE_URL: process.env.DATABASE_URL || cluster?.url('biasline'),
	BIASLINE_DATA_DIR: dataDir(),
	BIASLINE_SESSION_KEY: sessionKey(),
	BIASLINE_DEMO: process.env.BIASLINE_DEMO ?? '1'
};
// Started directly (not through npx) so that stopping this script stops Vite too.
const vite = spawn(path.join(root, 'node_modules', '.bin', 'vite'), ['dev', '--host', '127.0.0.1', ...process.argv.slice(2)], {
	env,
	stdio: 'inherit',
	cwd: root
});
const stop = () => {
	vite.kill('SIGTERM');
};
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
vite.on('exit', () => {
	if (cluster?.started) {
		say('stopping PostgreSQL…');
		cluster.stop();
	}
	process.exit(0);
});
