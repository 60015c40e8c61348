/**
 * The e2e harness: install (cached) → package the .vsix → start an isolated code-server on a
 * copy of sample-workspace → drive it with Playwright through the scenarios → check the
 * extension host logs → stop everything it started, whatever happened.
 *
 * Usage: npm run test:e2e [-- --only 1,3] [-- --keep]   (see docs/e2e.md)
 */
import { execFileSync } from 'node:child_process';
import { cp, mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { Skip } from './assert';
import { applyTheme, contributedCommands, makeAudit, type Ctx } from './context';
import { ourErrors } from './logs';
import { runToEnd, stopAll } from './processes';
import { startServer, type Server, type Tools } from './server';
import { waitForWorkbench } from './workbench';
import { scenarios } from './scenarios/index';

// Bundled to dist/e2e/main.mjs: the repo is two folders up either way.
const repo = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const artifacts = join(repo, 'test/e2e/artifacts');
const scratch = join(artifacts, 'tmp');
const args = process.argv.slice(2);
const keep = args.includes('--keep');
const onlyArg = args.find((a, i) => args[i - 1] === '--only');
const only = onlyArg ? new Set(onlyArg.split(',').map((s) => s.trim())) : undefined;

type Status = 'passed' | 'failed' | 'skipped';
interface Result {
  id: string;
  title: string;
  status: Status;
  ms: number;
  detail: string;
}

const timings: Array<[string, number]> = [];
async function timed<T>(label: string, f: () => Promise<T>): Promise<T> {
  const t = Date.now();
  try {
    return await f();
  } finally {
    timings.push([label, Date.now() - t]);
    log(`${label}: ${((Date.now() - t) / 1000).toFixed(1)} s`);
  }
}

function log(msg: string): void {
  process.stdout.write(`[e2e ${new Date().toISOString().slice(11, 19)}] ${msg}\n`);
}

async function install(): Promise<Tools> {
  const out = execFileSync('bash', [join(repo, 'test/e2e/install.sh')], { stdio: ['ignore', 'pipe', 'inherit'], encoding: 'utf8' });
  const get = (k: string) => /^(\w+)=(.*)$/m.exec(out.split('\n').find((l) => l.startsWith(`${k}=`)) ?? '')?.[2];
  const n24 = get('N24');
  const codeServer = get('CODE_SERVER');
  if (!n24 || !codeServer) throw new Error(`install.sh did not report N24/CODE_SERVER:\n${out}`);
  return { n24, codeServer };
}

async function packageVsix(): Promise<string> {
  const vsix = join(repo, 'dist/spillway.vsix');
  if (process.env.SPILLWAY_E2E_VSIX) return resolve(process.env.SPILLWAY_E2E_VSIX);
  const logFile = join(scratch, 'package.log');
  await writeFile(logFile, '');
  // The project's build, then vsce offline. Relative README links stay as they are (no repository
  // URL is published), which `npm run package` would otherwise refuse.
  let code = await runToEnd('npm', ['run', 'build'], logFile, { cwd: repo, timeoutMs: 300_000 });
  if (code === 0) {
    await rm(vsix, { force: true });
    code = await runToEnd(
      join(repo, 'node_modules/.bin/vsce'),
      ['package', '--no-dependencies', '--allow-missing-repository', '--no-rewrite-relative-links', '-o', vsix],
      logFile,
      { cwd: repo, timeoutMs: 300_000 },
    );
  }
  if (code !== 0 || !existsSync(vsix)) throw new Error(`packaging failed (exit ${code}):\n${(await readFile(logFile, 'utf8')).slice(-3000)}`);
  return vsix;
}

async function main(): Promise<number> {
  const t0 = Date.now();
  await rm(scratch, { recursive: true, force: true });
  await mkdir(scratch, { recursive: true });
  const results: Result[] = [];
  let server: Server | undefined;
  let browser: BrowserContext | undefined;
  let runDir: string | undefined;
  let fatal: unknown;
  try {
    const tools = await timed('install (cached when present)', install);
    const vsix = await timed('package .vsix', packageVsix);
    runDir = await mkdtemp(join(tmpdir(), 'spillway-e2e-'));
    const rd = runDir;
    server = await timed('start code-server', () => startServer(tools, { runDir: rd, vsix, sourceWorkspace: join(repo, 'sample-workspace') }));
    log(`code-server at ${server.url}, workspace copy ${server.workspace}`);

    browser = await chromium.launchPersistentContext(join(runDir, 'chromium-profile'), {
      executablePath: process.env.SPILLWAY_E2E_CHROMIUM ?? '/usr/bin/chromium',
      headless: true,
      viewport: { width: 1440, height: 900 },
      args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--disable-dev-shm-usage'],
    });
    const page: Page = browser.pages()[0] ?? (await browser.newPage());
    page.setDefaultTimeout(20_000);

    const ctx: Ctx = {
      repo,
      page,
      browser,
      server,
      artifacts,
      commands: contributedCommands(server.extensionDir),
      requests: [],
      console: [],
      pageErrors: [],
      log: (m) => log(`  ${m}`),
      audit: makeAudit(repo),
      screenshot: async (name) => {
        const p = join(artifacts, `${name}.png`);
        await page.screenshot({ path: p });
        log(`  screenshot ${p.slice(repo.length + 1)}`);
        return p;
      },
      setTheme: (theme) => applyTheme(server!, page, theme),
      command: (ids, pattern) =>
        ctx.commands.find((c) => ids.includes(c.id)) ?? (pattern ? ctx.commands.find((c) => pattern.test(c.palette)) : undefined),
    };
    const origin = new URL(server.url).origin;
    // Anything not served by our code-server is recorded and refused: the run is offline by design,
    // and scenario 5 checks that no webview ever asked for anything remote.
    await browser.route('**/*', (route) => {
      const u = route.request().url();
      if (u.startsWith(origin) || u.startsWith('data:') || u.startsWith('blob:')) return route.continue();
      return route.abort('blockedbyclient');
    });
    browser.on('request', (req) => {
      let frameUrl = '';
      try {
        frameUrl = req.frame().url();
      } catch {
        // Requests of a service worker have no frame; VS Code's webviews load resources through one.
        frameUrl = `(service worker ${req.serviceWorker()?.url() ?? ''})`;
      }
      ctx.requests.push({ url: req.url(), frameUrl, fromWebview: /webview/i.test(frameUrl) });
    });
    page.on('console', (m) => ctx.console.push({ type: m.type(), text: m.text(), url: m.location().url }));
    page.on('pageerror', (e) => ctx.pageErrors.push(`${e.message}\n${e.stack ?? ''}`));

    await timed('workbench visible', async () => {
      await page.goto(server!.url, { waitUntil: 'domcontentloaded', timeout: 60_000 });
      await waitForWorkbench(page);
    });

    for (const s of scenarios) {
      const num = s.id.split('-')[0]!;
      if (only && !only.has(num) && !only.has(s.id)) continue;
      log(`scenario ${s.id}: ${s.title}`);
      const t = Date.now();
      let status: Status = 'passed';
      let detail = '';
      try {
        await withTimeout(s.run(ctx), 300_000, s.id);
      } catch (e) {
        if (e instanceof Skip) {
          status = 'skipped';
          detail = e.message;
        } else {
          status = 'failed';
          detail = e instanceof Error ? e.message : String(e);
          await page.screenshot({ path: join(scratch, `failed-${s.id}.png`) }).catch(() => undefined);
        }
      }
      // Leave no quick input or dialog open for the next scenario.
      await page.keyboard.press('Escape').catch(() => undefined);
      results.push({ id: s.id, title: s.title, status, ms: Date.now() - t, detail });
      log(`  → ${status.toUpperCase()} in ${((Date.now() - t) / 1000).toFixed(1)} s${detail ? `: ${detail}` : ''}`);
    }

    // Errors from our extension anywhere in the extension host logs fail the run.
    await writeFile(join(scratch, 'requests.json'), JSON.stringify(ctx.requests, null, 1));
    const findings = await ourErrors(server.userDataDir);
    const webErrors = ctx.pageErrors.filter((e) => e.includes('spillway'));
    const hostConsole = ctx.console.filter((m) => m.type === 'error' && m.text.includes('spillway-dev.spillway'));
    const bad = [
      ...findings.map((f) => `${f.file}: ${f.entry}`),
      ...webErrors.map((e) => `page error: ${e}`),
      ...hostConsole.map((m) => `console: ${m.text}`),
    ];
    results.push({
      id: 'log',
      title: 'no error from Spillway in the extension host log, its output channel or the page',
      status: bad.length === 0 ? 'passed' : 'failed',
      ms: 0,
      detail: bad.slice(0, 5).join('\n---\n'),
    });
  } catch (e) {
    fatal = e;
  } finally {
    await timed('stop everything', async () => {
      await browser?.close().catch(() => undefined);
      await server?.stop();
      await stopAll();
    });
    if (server) {
      // Keep the logs of the last run beside the artefacts (ignored by git).
      await rm(join(scratch, 'logs'), { recursive: true, force: true });
      await cp(join(server.userDataDir, 'logs'), join(scratch, 'logs'), { recursive: true }).catch(() => undefined);
      await cp(server.logFile, join(scratch, 'logs', 'code-server.log')).catch(() => undefined);
    }
    if (runDir && !keep) await rm(runDir, { recursive: true, force: true }).catch(() => undefined);
    else if (runDir) log(`kept run folder ${runDir}`);
  }

  const total = Date.now() - t0;
  log('');
  log('timings:');
  for (const [label, ms] of timings) log(`  ${label.padEnd(32)} ${(ms / 1000).toFixed(1).padStart(6)} s`);
  for (const r of results) if (r.ms) log(`  scenario ${r.id.padEnd(23)} ${(r.ms / 1000).toFixed(1).padStart(6)} s`);
  log(`  ${'total'.padEnd(32)} ${(total / 1000).toFixed(1).padStart(6)} s`);
  log('');
  for (const r of results) log(`${r.status.toUpperCase().padEnd(7)} ${r.id}: ${r.title}${r.detail ? `\n          ${r.detail.replace(/\n/g, '\n          ')}` : ''}`);
  if (fatal) {
    log(`FATAL: ${fatal instanceof Error ? (fatal.stack ?? fatal.message) : String(fatal)}`);
    results.push({ id: 'harness', title: 'harness', status: 'failed', ms: 0, detail: String(fatal) });
  }
  const n = (s: Status) => results.filter((r) => r.status === s).length;
  await writeFile(join(scratch, 'results.json'), JSON.stringify({ results, timings, totalMs: total }, null, 2));
  // The plain closing line CI reads.
  process.stdout.write(`\ne2e: ${n('passed')} passed, ${n('failed')} failed, ${n('skipped')} skipped\n`);
  return n('failed') > 0 ? 1 : 0;
}

async function withTimeout<T>(p: Promise<T>, ms: number, what: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  try {
    return await Promise.race([p, new Promise<never>((_, rej) => (timer = setTimeout(() => rej(new Error(`${what}: timed out after ${ms / 1000} s`)), ms)))]);
  } finally {
    clearTimeout(timer);
  }
}

main().then(
  (code) => process.exit(code),
  async (e) => {
    process.stderr.write(`${e instanceof Error ? e.stack : String(e)}\n`);
    await stopAll();
    process.exit(1);
  },
);
