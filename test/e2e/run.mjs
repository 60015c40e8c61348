// Entry of `npm run test:e2e`: bundles the TypeScript harness with esbuild (the project's own
// bundler; the project runs on Node 20, which cannot run .ts), then runs it.
import { build } from 'esbuild';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { dirname, join } from 'node:path';

const here = dirname(fileURLToPath(import.meta.url));
const out = join(here, '../../dist/e2e/main.mjs');
await build({
  entryPoints: [join(here, 'main.ts')],
  outfile: out,
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  packages: 'external',
  sourcemap: 'inline',
  logLevel: 'warning',
});
await import(pathToFileURL(out).href);
