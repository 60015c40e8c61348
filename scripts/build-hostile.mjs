// Bundles the hostile-text benchmark, the reference-fixture maker and the code-point scan (issue 10) with esbuild.
// tiktoken stays external: it loads its WASM file from node_modules at run time.
import { build } from 'esbuild';

const common = {
  bundle: true,
  platform: 'node',
  format: 'cjs',
  target: 'node20',
  sourcemap: true,
  logLevel: 'warning',
  legalComments: 'none',
  external: ['tiktoken'],
};
await Promise.all([
  build({
    ...common,
    entryPoints: ['scripts/bench-hostile.ts'],
    outfile: 'dist/bench-hostile.js',
    define: { 'process.env.SPILLWAY_HOSTILE_MAIN': '"1"' },
  }),
  build({
    ...common,
    entryPoints: ['test/fixtures/tokens/make-hostile-reference.ts'],
    outfile: 'dist/make-hostile-reference.js',
  }),
  build({ ...common, entryPoints: ['test/fixtures/tokens/scan-code-points.ts'], outfile: 'dist/scan-code-points.js' }),
]);
