// Bundles shootRepack.ts (it imports the TypeScript core) and runs it. Needs `npm run build` first.
import { build } from 'esbuild';
import { spawnSync } from 'node:child_process';
await build({
  entryPoints: ['test/webview/harness/shootRepack.ts'],
  outfile: 'node_modules/.cache/spillway-repack-harness.cjs',
  bundle: true, platform: 'node', format: 'cjs', target: 'node20', logLevel: 'warning',
  mainFields: ['module', 'main'], external: ['playwright-core'],
});
const r = spawnSync(process.execPath, ['node_modules/.cache/spillway-repack-harness.cjs', ...process.argv.slice(2)], { stdio: 'inherit' });
process.exit(r.status ?? 1);
