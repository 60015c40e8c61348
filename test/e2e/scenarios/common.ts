/** Shared steps: reading the original record, opening the panel, finding its webview frame. */
import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Frame } from 'playwright-core';
import type { LogRecord } from '../../../extension/core/log/types';
import type { Ctx, Command } from '../context';
import { skip } from '../assert';
import { findWebviewFrame, runCommand } from '../workbench';

/** The record on a 1-based line of a sample log, parsed from the ORIGINAL file. */
export async function recordAt(ctx: Ctx, rel: string, line: number): Promise<LogRecord> {
  const text = await readFile(join(ctx.repo, 'sample-workspace', rel), 'utf8');
  const l = text.split('\n')[line - 1];
  if (l === undefined) throw new Error(`${rel} has no line ${line}`);
  return JSON.parse(l) as LogRecord;
}

export function panelCommand(ctx: Ctx): Command {
  const c = ctx.command(['spillway.showPanel', 'spillway.openPanel', 'spillway.focusPanel'], /^Spillway: (Show|Open|Focus).*(Panel|Ledger)/i);
  if (!c) skip('no "show panel" command contributed');
  return c;
}

/** The panel's document: the webview frame holding the Spillway panel's tabs. */
export async function panelFrame(ctx: Ctx, timeout = 30_000): Promise<Frame> {
  return await findWebviewFrame(ctx.page, 'header.top .log-title', timeout);
}

/** Show the panel from the palette, on its Turn tab (a re-pack leaves it on Compare). */
export async function showPanel(ctx: Ctx, tab: RegExp = /^\s*turn\s*$/i): Promise<Frame> {
  await runCommand(ctx.page, panelCommand(ctx).palette, { timeout: 40_000 });
  const frame = await panelFrame(ctx);
  const header = frame.locator('vscode-tab-header', { hasText: tab }).first();
  if ((await header.count()) > 0) await header.click();
  return frame;
}

/** Wait until the panel shows the turn of `line` (its segment table is for that record). */
export async function waitPanelTurn(frame: Frame, expect: { line: number; segmentIds: string[] }, timeout = 20_000): Promise<void> {
  const deadline = Date.now() + timeout;
  let seen: string[] = [];
  while (Date.now() < deadline) {
    seen = await frame.locator('[role="grid"][aria-label="Segments in prompt order"] tr[data-id]').evaluateAll((rows) => rows.map((r) => r.getAttribute('data-id') ?? ''));
    if (seen.length === expect.segmentIds.length && expect.segmentIds.every((id) => seen.includes(id))) return;
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`panel did not show the turn on line ${expect.line}: segment rows ${seen.join(',') || '(none)'}; expected ${expect.segmentIds.join(',')}`);
}
