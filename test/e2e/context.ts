/** What every scenario gets: the page, the server, expected figures from the CLI, helpers. */
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import type { AuditReport } from '../../extension/core/audit/types';
import type { Server } from './server';
import { writeSettings } from './server';
import { sleep } from './workbench';

const run = promisify(execFile);

export interface Command {
  id: string;
  /** As the palette shows it: "Category: Title". */
  palette: string;
}

export interface WebRequest {
  url: string;
  frameUrl: string;
  fromWebview: boolean;
}

export interface Ctx {
  repo: string;
  page: Page;
  browser: BrowserContext;
  server: Server;
  artifacts: string;
  /** Commands contributed by package.json, as the palette shows them. */
  commands: Command[];
  /** Every request the browser made (any frame), recorded by the harness. */
  requests: WebRequest[];
  /** Every console message of the page and its frames: [type, text, frame url]. */
  console: Array<{ type: string; text: string; url: string }>;
  pageErrors: string[];
  log(msg: string): void;
  /** `spillway audit <workspace file> --format json`, run on the ORIGINAL sample file. */
  audit(rel: string, extra?: string[]): Promise<AuditReport>;
  screenshot(name: string): Promise<string>;
  setTheme(theme: 'Default Dark Modern' | 'Default Light Modern'): Promise<void>;
  command(ids: string[], titlePattern?: RegExp): Command | undefined;
}

/** Commands of the INSTALLED extension's manifest (what the workbench sees). */
export function contributedCommands(extensionDir: string): Command[] {
  const pkg = JSON.parse(readFileSync(join(extensionDir, 'package.json'), 'utf8')) as {
    contributes?: { commands?: Array<{ command: string; title: string; category?: string }> };
  };
  return (pkg.contributes?.commands ?? []).map((c) => ({
    id: c.command,
    palette: c.category ? `${c.category}: ${c.title}` : c.title,
  }));
}

export function makeAudit(repo: string) {
  const cache = new Map<string, Promise<AuditReport>>();
  return (rel: string, extra: string[] = []): Promise<AuditReport> => {
    const key = [rel, ...extra].join(' ');
    let p = cache.get(key);
    if (!p) {
      p = run(process.execPath, [join(repo, 'dist/cli.js'), 'audit', join(repo, 'sample-workspace', rel), '--format', 'json', ...extra], {
        maxBuffer: 512 * 1024 * 1024,
      })
        .catch((e: { stdout?: string; code?: number }) => {
          // audit exits non-zero when it finds problems; the JSON is still on stdout.
          if (e.stdout) return { stdout: e.stdout };
          throw e;
        })
        .then(({ stdout }) => {
          const report = JSON.parse(stdout) as AuditReport;
          if (report.schema !== 'spillway.audit/1') throw new Error(`unexpected audit schema ${String(report.schema)}`);
          return report;
        });
      cache.set(key, p);
    }
    return p;
  };
}

export async function applyTheme(server: Server, page: Page, theme: string): Promise<void> {
  await writeSettings(server.settingsFile, { 'workbench.colorTheme': theme });
  // The workbench watches settings.json; wait until the theme class flips.
  const want = theme.includes('Light') ? 'vs' : 'vs-dark';
  const deadline = Date.now() + 15_000;
  while (Date.now() < deadline) {
    const cls = (await page.locator('.monaco-workbench').getAttribute('class')) ?? '';
    if (cls.split(/\s+/).includes(want)) break;
    await sleep(250);
  }
  await sleep(800); // webviews receive the new theme variables asynchronously
}
