// Bundles the extension host, the CLI, the benchmark and the webview with esbuild.
import { build } from 'esbuild';
import { cp, mkdir } from 'node:fs/promises';
import { existsSync } from 'node:fs';

// mainFields: prefer ESM builds (jsonc-parser's UMD build hides its requires from the bundler).
const common = { bundle: true, sourcemap: true, logLevel: 'warning', legalComments: 'none', mainFields: ['module', 'main'] };
const nodeTargets = [
  { entryPoints: ['extension/host/extension.ts'], outfile: 'dist/extension.js', external: ['vscode'] },
  // The host's heavy half (reader, validator, ledger, tokenizer), required on first need: activation stays small.
  { entryPoints: ['extension/host/engine.ts'], outfile: 'dist/engine.js' },
  { entryPoints: ['extension/cli/main.ts'], outfile: 'dist/cli.js', banner: { js: '#!/usr/bin/env node' } },
  { entryPoints: ['extension/cli/gen.ts'], outfile: 'dist/gen.js' },
  { entryPoints: ['scripts/bench.ts'], outfile: 'dist/bench.js' },
  { entryPoints: ['extension/core/tokens/countWorker.ts'], outfile: 'dist/countWorker.js' },
  // The parallel audit's worker threads (extension/core/audit/parallel.ts).
  { entryPoints: ['extension/core/audit/worker.ts'], outfile: 'dist/auditWorker.js' },
].filter((t) => existsSync(t.entryPoints[0]));

await mkdir('dist/webview', { recursive: true });
await Promise.all([
  ...nodeTargets.map((t) => build({ ...common, platform: 'node', format: 'cjs', target: 'node20', ...t })),
  existsSync('webview/src/main.ts')
    ? build({ ...common, platform: 'browser', format: 'iife', target: 'es2022', entryPoints: ['webview/src/main.ts'], outfile: 'dist/webview/main.js', minify: true })
    : Promise.resolve(),
]);
if (existsSync('webview/src/panel.css')) await cp('webview/src/panel.css', 'dist/webview/panel.css');
