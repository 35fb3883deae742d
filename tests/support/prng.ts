// Reproducible noise for tests and benchmarks: the app's own seeded generator (src/lib/prng.ts),
// which the demo scenario also uses.
export { gauss, prng } from '../../src/lib/prng';
