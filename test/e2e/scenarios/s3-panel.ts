/**
 * Scenario 3: open the panel from the palette and select a turn: the budget bar, the segment
 * table with ranks and fates, and the passage text split at the exact cut point are shown.
 * Expected values come from `spillway audit --format json` and the original record's text.
 */
import type { Frame } from 'playwright-core';
import type { Ctx } from '../context';
import type { Ledger } from '../../../extension/core/audit/types';
import { assert, cssString, fmt, skip } from '../assert';
import { codeLenses, goToLine, hideBottomPanel, openFile, setSidebarWidth, sleep } from '../workbench';
import { SAMPLE_LOG } from './smoke';
import { panelFrame, recordAt, showPanel, waitPanelTurn } from './common';

/** The turn the scenario selects: one with a clipped passage (so there is a cut to show). */
export function turnWithCut(records: Ledger[]): Ledger | undefined {
  return records.find((r) => r.segments.some((s) => s.kind === 'passage' && s.fate === 'clipped' && s.cut));
}

export const SELECTED = { line: 0 };

async function checkTurn(ctx: Ctx, frame: Frame, r: Ledger): Promise<void> {
  const rec = await recordAt(ctx, SAMPLE_LOG, r.line);
  // Budget bar: an image whose accessible summary carries the turn's used and budget figures.
  const bar = frame.locator('svg.budget-bar[role="img"]');
  await bar.waitFor({ state: 'visible', timeout: 10_000 });
  const summary = (await bar.getAttribute('aria-label')) ?? '';
  assert(summary.includes(fmt(r.used)) && summary.includes(fmt(r.budget)), `budget bar says "${summary}", expected ${fmt(r.used)} used of ${fmt(r.budget)}`);
  const parts = await bar.locator('[data-part]').count();
  assert(parts >= 2, `budget bar has ${parts} parts`);

  // Segment table: every segment, in prompt order, with its rank and fate.
  const rows = frame.locator('[role="grid"][aria-label="Segments in prompt order"] tbody tr[data-id]');
  const ids = await rows.evaluateAll((trs) => trs.map((t) => t.getAttribute('data-id')));
  assert(JSON.stringify(ids) === JSON.stringify(r.segments.map((s) => s.id)), `segment rows ${ids.join(',')} ≠ prompt order ${r.segments.map((s) => s.id).join(',')}`);
  for (const s of r.segments) {
    const row = rows.filter({ has: frame.locator(`td.seg-id`, { hasText: new RegExp(`^${s.id.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}$`) }) }).first();
    const aria = (await row.getAttribute('aria-label')) ?? '';
    const cells = ((await row.innerText()) ?? '').replace(/\s+/g, ' ');
    assert(aria.endsWith(`, ${s.fate}`) && cells.includes(s.fate), `row ${s.id}: fate "${aria}", expected ${s.fate}`);
    if (s.rank !== undefined) assert(aria.includes(`rank ${s.rank},`), `row ${s.id}: "${aria}" lacks rank ${s.rank}`);
    assert(aria.includes(`${fmt(s.tokens)} tokens`), `row ${s.id}: "${aria}" lacks ${fmt(s.tokens)} tokens`);
  }

  // Passage text with the cut: kept part = text.slice(0, cut.char), spilled part = the rest.
  const seg = r.segments.find((s) => s.kind === 'passage' && s.fate === 'clipped' && s.cut)!;
  const text = rec.segments.find((s) => s.id === seg.id)!.text;
  await rows.filter({ has: frame.locator('td.seg-id', { hasText: seg.id }) }).first().click();
  const passage = frame.locator(`.passage[data-segment=${cssString(seg.id)}]`);
  await passage.waitFor({ state: 'visible', timeout: 10_000 });
  const kept = (await passage.locator('[data-part="kept"]').textContent()) ?? '';
  const spilled = (await passage.locator('[data-part="spilled"]').textContent()) ?? '';
  assert(kept === text.slice(0, seg.cut!.char), `kept text (${kept.length} chars) is not the first ${seg.cut!.char} chars of ${seg.id}`);
  assert(spilled === text.slice(seg.cut!.char), `spilled text (${spilled.length} chars) is not the rest of ${seg.id} after char ${seg.cut!.char}`);
  const cutLabel = (await passage.locator('[role="separator"]').getAttribute('aria-label')) ?? '';
  assert(cutLabel.includes(`${fmt(seg.cut!.token)} tokens kept`) && cutLabel.includes(`${fmt(seg.tokens - seg.keptTokens)} tokens spilled`), `cut mark says "${cutLabel}"`);
  await passage.scrollIntoViewIfNeeded();
  ctx.log(`line ${r.line}: ${r.segments.length} segments; ${seg.id} (rank ${seg.rank}) cut at token ${seg.cut!.token}, char ${seg.cut!.char}`);
}

export const panel = {
  id: '3-panel',
  title: 'panel from the palette: budget bar, segment table (ranks, fates), passage cut',
  async run(ctx: Ctx): Promise<void> {
    const report = await ctx.audit(SAMPLE_LOG);
    const r = turnWithCut(report.records);
    if (!r) skip(`${SAMPLE_LOG} has no turn with a clipped passage`);
    await openFile(ctx.page, SAMPLE_LOG);
    await goToLine(ctx.page, r.line);
    let frame = await showPanel(ctx);
    try {
      await waitPanelTurn(frame, { line: r.line, segmentIds: r.segments.map((s) => s.id) }, 8000);
    } catch {
      // The panel may not follow the cursor until it is visible: a user then clicks the record's CodeLens.
      await goToLine(ctx.page, r.line);
      await sleep(500);
      const lens = (await codeLenses(ctx.page)).find((l) => l.line === r.line);
      assert(lens, `panel did not select line ${r.line} and no CodeLens is there to click`);
      await ctx.page.locator('.editor-group-container.active .codelens-decoration a').filter({ hasText: lens.text.split('|')[0]!.trim().slice(0, 20) }).first().click();
      frame = await showPanel(ctx);
      await waitPanelTurn(frame, { line: r.line, segmentIds: r.segments.map((s) => s.id) });
    }
    SELECTED.line = r.line;
    await checkTurn(ctx, frame, r);

    // Screenshots: a wide side bar, no bottom panel; the turn's top (bar + table), then the cut.
    await hideBottomPanel(ctx.page);
    await setSidebarWidth(ctx.page, 820);
    const seg = r.segments.find((s) => s.kind === 'passage' && s.fate === 'clipped' && s.cut)!;
    for (const [theme, name] of [['Default Dark Modern', 'dark'], ['Default Light Modern', 'light']] as const) {
      await ctx.setTheme(theme);
      frame = await panelFrame(ctx);
      await frame.locator('svg.budget-bar').scrollIntoViewIfNeeded();
      await frame.evaluate(() => window.scrollTo(0, 0));
      await sleep(300);
      await ctx.screenshot(`s3-panel-${name}`);
      await frame.locator(`.passage[data-segment=${cssString(seg.id)}] [role="separator"]`).evaluate((el) => el.scrollIntoView({ block: 'center' }));
      await sleep(300);
      await ctx.screenshot(`s3-passage-cut-${name}`);
    }
    await ctx.setTheme('Default Dark Modern');
  },
};
