/**
 * Scenario 1: open a sample log; a CodeLens above each record line shows that turn's exact
 * figures, compared with `spillway audit --format json` on the same file; the status bar item
 * shows the log's summary.
 */
import type { Ctx } from '../context';
import type { Ledger } from '../../../extension/core/audit/types';
import { assert, fmt } from '../assert';
import { codeLenses, goToLine, openFile, sleep } from '../workbench';
import { SAMPLE_LOG } from './smoke';

/**
 * What a lens must say for a record, written out here from the audit JSON (not from the host's
 * formatter): "used / budget", free room or how far over, the passages clipped and dropped, the
 * tokens spilled. The host may add more (e.g. history cut); these parts must be there.
 */
export function expectedLensParts(r: Ledger): string[] {
  const passages = r.segments.filter((s) => s.kind === 'passage');
  const clipped = passages.filter((s) => s.fate === 'clipped').length;
  const dropped = passages.filter((s) => s.fate === 'dropped').length;
  const parts = [`${fmt(r.used)} / ${fmt(r.budget)}`];
  parts.push(r.over > 0 ? `${fmt(r.over)} over` : `${fmt(r.free)} free`);
  if (clipped) parts.push(`${fmt(clipped)} clipped`);
  if (dropped) parts.push(`${fmt(dropped)} dropped`);
  if (r.spill > 0) parts.push(`${fmt(r.spill)} spilled`);
  return parts;
}

export const codelens = {
  id: '1-codelens',
  title: 'CodeLens per record with the audited figures; status bar summary',
  async run(ctx: Ctx): Promise<void> {
    const report = await ctx.audit(SAMPLE_LOG);
    assert(report.records.length > 0, `audit found no records in ${SAMPLE_LOG}`);
    await openFile(ctx.page, SAMPLE_LOG);
    const byLine = new Map(report.records.map((r) => [r.line, r]));

    // Walk the file in screenfuls so every record's lens is checked, not just the first few.
    const checked = new Set<number>();
    const problems: string[] = [];
    const lastLine = Math.max(...report.records.map((r) => r.line));
    let target = 1;
    for (let guard = 0; guard < 200 && checked.size < report.records.length; guard++) {
      let lenses: Array<{ line: number; text: string }> = [];
      for (const deadline = Date.now() + 30_000; Date.now() < deadline; ) {
        lenses = (await codeLenses(ctx.page)).filter((l) => byLine.has(l.line));
        if (lenses.length > 0) break;
        await sleep(500);
      }
      assert(lenses.length > 0, `no CodeLens near line ${target} of ${SAMPLE_LOG} within 30 s`);
      for (const l of lenses) {
        if (checked.has(l.line)) continue;
        checked.add(l.line);
        const missing = expectedLensParts(byLine.get(l.line)!).filter((p) => !l.text.includes(p));
        if (missing.length) problems.push(`line ${l.line}: lens "${l.text}" lacks ${missing.map((m) => `"${m}"`).join(', ')}`);
      }
      const maxSeen = Math.max(...lenses.map((l) => l.line));
      if (maxSeen >= lastLine) break;
      target = maxSeen + 1;
      await goToLine(ctx.page, Math.min(lastLine, target + 8));
      await sleep(400);
    }
    const unchecked = report.records.filter((r) => !checked.has(r.line)).map((r) => r.line);
    assert(problems.length === 0, problems.slice(0, 5).join('; '));
    assert(unchecked.length === 0, `records without a visible CodeLens: lines ${unchecked.slice(0, 10).join(', ')}`);
    ctx.log(`${checked.size} CodeLens match the audit (e.g. line ${report.records[0]!.line}: ${expectedLensParts(report.records[0]!).join(' · ')})`);

    // Status bar: the extension's item names the turn count and the over-budget count.
    await goToLine(ctx.page, report.records[0]!.line);
    const item = ctx.page.locator('#workbench\\.parts\\.statusbar [id^="spillway-dev.spillway"]').first();
    await item.waitFor({ state: 'visible', timeout: 20_000 });
    const text = ((await item.textContent()) ?? '').replace(/\s+/g, ' ').trim();
    const aria = await item.evaluate((el) => [el, ...el.querySelectorAll('[aria-label]')].map((e) => e.getAttribute('aria-label') ?? '').join(' '));
    const s = report.summary;
    const shown = `${text} ${aria}`;
    for (const part of [`${fmt(s.turns)} turn`, `${fmt(s.overBudget)} over`, `${fmt(s.rank1Clipped)} rank-1 clipped`]) {
      assert(shown.includes(part), `status bar "${text}" lacks "${part}" (audit summary: ${JSON.stringify(s)})`);
    }
    ctx.log(`status bar: "${text}"`);
    await ctx.setTheme('Default Dark Modern');
    await ctx.screenshot('s1-codelens-dark');
  },
};
