// Plain-node entry (`npm run sim`): registers tsx so the TypeScript simulator runs without a build step.
// Bundlers resolve an extensionless './cli' to this file before cli.ts, so it does nothing unless it
// is the program being run; import './cli.ts' or './simulation' for the API.
import { pathToFileURL } from 'node:url';

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
	const { register } = await import('tsx/esm/api');
	register();
	const { runCli } = await import('./cli.ts');
	process.exitCode = await runCli();
}
