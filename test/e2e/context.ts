/** What every scenario gets: the page, the server, expected figures from the CLI, helpers. */
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { readFileSync } from 'node:fs';
import { isAbsolute, join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import type { AuditReport } from '../../extension/core/audit/types';
import type { Server } from './server';
import { runCommand, sleep } from './workbench';

const run = promisify(execFile);

export interface Command {
  id: string;
  /** As the palette shows it: "Category: Title". */
  palette: string;
  /** Hidden from the palette by `menus.commandPalette` `"when": "false"`. */
  hidden: boolean;
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
    contributes?: {
      commands?: Array<{ command: string; title: string; category?: string }>;
      menus?: { commandPalette?: Array<{ command: string; when?: string }> };
    };
  };
  const hidden = new Set((pkg.contributes?.menus?.commandPalette ?? []).filter((m) => m.when === 'false').map((m) => m.command));
  return (pkg.contributes?.commands ?? []).map((c) => ({
    id: c.command,
    palette: c.category ? `${c.category}: ${c.title}` : c.title,
    hidden: hidden.has(c.command),
  }));
}

export function makeAudit(repo: string) {
  const cache = new Map<string, Promise<AuditReport>>();
  return (rel: string, extra: string[] = []): Promise<AuditReport> => {
    const key = [rel, ...extra].join(' ');
    let p = cache.get(key);
    if (!p) {
      p = run(process.execPath, [join(repo, 'dist/cli.js'), 'audit', isAbsolute(rel) ? rel : join(repo, 'sample-workspace', rel), '--format', 'json', ...extra], {
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

/**
 * Switch the colour theme the way a user does ("Preferences: Color Theme", pick by name) and wait
 * until the workbench shows it (its root element carries `vs` or `vs-dark`).
 */
export async function applyTheme(_server: Server, page: Page, theme: string): Promise<void> {
  const want = theme.includes('Light') ? 'vs' : 'vs-dark';
  const isOn = async () => ((await page.locator('.monaco-workbench').getAttribute('class')) ?? '').split(/\s+/).includes(want);
  if (await isOn()) return;
  await runCommand(page, 'Preferences: Color Theme', { timeout: 20_000 });
  // The setting's value is "Default Light Modern"; the picker labels it "Light Modern".
  const label = theme.replace(/^Default /, '');
  const box = page.locator('.quick-input-widget input.input').first();
  await box.fill(label);
  const row = page.locator('.quick-input-widget .quick-input-list .monaco-list-row').filter({ has: page.locator('.label-name', { hasText: new RegExp(`^\\s*${label}\\s*$`) }) }).first();
  await row.waitFor({ timeout: 10_000 });
  await row.click();
  const deadline = Date.now() + 15_000;
  while (!(await isOn())) {
    if (Date.now() > deadline) throw new Error(`colour theme did not switch to ${theme}`);
    await sleep(250);
  }
  await sleep(1000); // webviews receive the new theme variables asynchronously
}
