/** Scenario 6: reload the window; the panel comes back on the same turn. */
import type { Ctx } from '../context';
import { assert, skip } from '../assert';
import { goToLine, openFile, runCommand, sleep, waitForWorkbench } from '../workbench';
import { SAMPLE_LOG } from './smoke';
import { panelFrame, showPanel, waitPanelTurn } from './common';
import { SELECTED } from './s3-panel';

export const reload = {
  id: '6-reload',
  title: 'reload the window: the panel comes back on the same turn',
  async run(ctx: Ctx): Promise<void> {
    if (!SELECTED.line) skip('scenario 3 did not select a turn');
    const report = await ctx.audit(SAMPLE_LOG);
    const r = report.records.find((x) => x.line === SELECTED.line)!;
    // Put the panel back on scenario 3's turn (scenario 5 moved it): cursor on that record's line.
    await openFile(ctx.page, SAMPLE_LOG);
    await goToLine(ctx.page, r.line);
    let frame = await showPanel(ctx);
    const want = { line: r.line, segmentIds: r.segments.map((s) => s.id) };
    await waitPanelTurn(frame, want, 20_000);
    await runCommand(ctx.page, 'Developer: Reload Window', { timeout: 15_000 });
    await sleep(2000);
    await waitForWorkbench(ctx.page);
    // The panel restores itself (webview view state); do not open it again before looking.
    try {
      // Generous: on a loaded 2-core machine the new extension host has taken over 70 s to start.
      frame = await panelFrame(ctx, 150_000);
    } catch {
      await ctx.page.screenshot({ path: `${ctx.artifacts}/tmp/failed-6-reload-state.png` }).catch(() => undefined);
      const frames = ctx.page.frames().map((f) => f.url().slice(0, 120));
      throw new Error(`after reload the panel did not come back by itself; frames: ${frames.join(' , ')}`);
    }
    await waitPanelTurn(frame, want, 60_000);
    const selectedRowLine = await frame.locator('.turn-row[aria-selected="true"]').first().getAttribute('data-line').catch(() => null);
    assert(selectedRowLine === null || Number(selectedRowLine) === r.line, `turn list selects line ${selectedRowLine}, expected ${r.line}`);
    ctx.log(`after reload the panel shows line ${r.line} (${r.conversation} turn ${r.turn})`);
  },
};
