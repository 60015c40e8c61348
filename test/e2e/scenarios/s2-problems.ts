/**
 * Scenario 2: the Problems view lists the expected diagnostics for a log with a malformed
 * line: that line as an error with its line number, and the turns the audit finds over budget.
 */
import type { Ctx } from '../context';
import { assert } from '../assert';
import { openFile, runCommand, sleep } from '../workbench';

export const PROBLEM_LOG = 'logs/lost-property.jsonl';

interface Row {
  text: string;
  aria: string;
  error: boolean;
}

async function problemRows(ctx: Ctx): Promise<Row[]> {
  return await ctx.page.locator('.markers-panel .monaco-list-row').evaluateAll((rows) =>
    rows.map((r) => ({
      text: (r as HTMLElement).innerText.replace(/\s+/g, ' ').trim(),
      aria: r.getAttribute('aria-label') ?? '',
      error: r.querySelector('.codicon-error, .codicon-error-small') !== null,
    })),
  );
}

export const problems = {
  id: '2-problems',
  title: 'Problems view: malformed line with its line number, over-budget turns',
  async run(ctx: Ctx): Promise<void> {
    const report = await ctx.audit(PROBLEM_LOG);
    assert(report.errors.length > 0, `${PROBLEM_LOG} should hold a malformed line, the audit found none`);
    await openFile(ctx.page, PROBLEM_LOG);
    await runCommand(ctx.page, 'View: Focus Problems (Errors, Warnings, Infos)', { timeout: 20_000 });
    await ctx.page.locator('.markers-panel').waitFor({ state: 'visible', timeout: 15_000 });
    // Only this file's problems: the view's filter accepts a glob.
    const filter = ctx.page.locator('.markers-panel-container .viewpane-filter input, .panel .viewpane-filter input').first();
    if (await filter.isVisible().catch(() => false)) {
      await filter.fill(`**/${PROBLEM_LOG.split('/').pop()}`);
      await sleep(500);
    }

    const wantLines = report.errors.map((e) => e.line);
    const overLines = report.records.filter((r) => r.state !== 'ok').map((r) => r.line);
    let rows: Row[] = [];
    let missing: string[] = [];
    for (const deadline = Date.now() + 30_000; Date.now() < deadline; ) {
      rows = await problemRows(ctx);
      const at = (line: number, mustBeError: boolean) =>
        rows.some((r) => (r.text.includes(`[Ln ${line},`) || r.aria.includes(`line ${line} `)) && (!mustBeError || r.error));
      missing = [
        ...wantLines.filter((l) => !at(l, true)).map((l) => `error at line ${l} (${report.errors.find((e) => e.line === l)!.code})`),
        ...overLines.filter((l) => !at(l, false)).map((l) => `over-budget turn at line ${l}`),
      ];
      if (missing.length === 0) break;
      await sleep(750);
    }
    assert(missing.length === 0, `Problems view lacks ${missing.join('; ')}; shows: ${rows.map((r) => r.text).join(' | ').slice(0, 1500)}`);
    const malformed = rows.filter((r) => wantLines.some((l) => r.text.includes(`[Ln ${l},`)));
    ctx.log(`Problems view: ${rows.length} rows; malformed: ${malformed.map((r) => r.text).join(' | ')}`);
    await ctx.screenshot('s2-problems-dark');
  },
};
