/**
 * Scenario 2: the Problems view lists the expected diagnostics for a log with a malformed line:
 * that line as an error with its line and column, each turn the audit finds over budget, and each
 * turn whose rank-1 passage was clipped or dropped. Expected rows are derived here from
 * `spillway audit --format json` on the same file.
 */
import type { Ctx } from '../context';
import type { AuditReport } from '../../../extension/core/audit/types';
import { assert } from '../assert';
import { openFile, runCommand, sleep } from '../workbench';

export const PROBLEM_LOG = 'logs/lost-property.jsonl';

interface Row {
  text: string;
  severity: 'error' | 'warning' | 'info' | '';
}

interface Expected {
  line: number;
  column?: number;
  code: string;
  severity: 'error' | 'warning';
  words?: string;
}

export function expectedProblems(report: AuditReport): Expected[] {
  const out: Expected[] = report.errors.map((e) => ({ line: e.line, column: e.column, code: 'spillway.malformed', severity: 'error' as const, words: e.message }));
  for (const r of report.records) {
    if (r.state !== 'ok') out.push({ line: r.line, code: 'spillway.over-budget', severity: 'warning' });
    if (r.rank1Fate === 'clipped') out.push({ line: r.line, code: 'spillway.rank1-clipped', severity: 'warning' });
    if (r.rank1Fate === 'dropped') out.push({ line: r.line, code: 'spillway.rank1-dropped', severity: 'warning' });
  }
  return out;
}

async function problemRows(ctx: Ctx): Promise<Row[]> {
  return await ctx.page.locator('.markers-panel .monaco-list-row').evaluateAll((rows) =>
    rows.map((r) => ({
      text: (r as HTMLElement).innerText.replace(/\s+/g, ' ').trim(),
      severity: r.querySelector('.codicon-error') ? 'error' : r.querySelector('.codicon-warning') ? 'warning' : r.querySelector('.codicon-info') ? 'info' : '',
    })) as Row[],
  );
}

export const problems = {
  id: '2-problems',
  title: 'Problems view: malformed line with line and column, over-budget and rank-1 warnings',
  async run(ctx: Ctx): Promise<void> {
    const report = await ctx.audit(PROBLEM_LOG);
    assert(report.errors.length > 0, `${PROBLEM_LOG} should hold a malformed line; the audit found none`);
    const expected = expectedProblems(report);
    await openFile(ctx.page, PROBLEM_LOG);
    await runCommand(ctx.page, 'View: Focus Problems (Errors, Warnings, Infos)', { timeout: 20_000 });
    await ctx.page.locator('.markers-panel').waitFor({ state: 'visible', timeout: 15_000 });
    // Only this file's problems: the view's filter box takes a glob.
    const filter = ctx.page.locator('.viewpane-filter input').first();
    if (await filter.isVisible().catch(() => false)) {
      await filter.fill(`**/${PROBLEM_LOG.split('/').pop()}`);
      await sleep(500);
    }

    let rows: Row[] = [];
    let missing: Expected[] = [];
    const matches = (e: Expected, r: Row) =>
      r.text.includes(`[Ln ${e.line}, Col ${e.column ?? ''}`) && r.text.includes(e.code) && r.severity === e.severity && (!e.words || r.text.includes(e.words));
    for (const deadline = Date.now() + 30_000; Date.now() < deadline; ) {
      rows = await problemRows(ctx);
      missing = expected.filter((e) => !rows.some((r) => matches(e, r)));
      if (missing.length === 0) break;
      await sleep(750);
    }
    assert(
      missing.length === 0,
      `Problems view lacks ${missing.map((m) => `${m.severity} ${m.code} at line ${m.line}${m.column ? `, col ${m.column}` : ''}`).join('; ')}; shows: ${rows.map((r) => `[${r.severity}] ${r.text}`).join(' | ').slice(0, 1500)}`,
    );
    for (const e of expected.filter((x) => x.code === 'spillway.malformed')) ctx.log(`malformed: ${rows.find((r) => matches(e, r))!.text}`);
    ctx.log(`Problems view shows all ${expected.length} expected diagnostics (${rows.length} rows incl. the file row)`);
    await ctx.screenshot('s2-problems-dark');
  },
};
