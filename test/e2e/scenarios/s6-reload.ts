/** Scenario 6: reload the window; the panel comes back on the same turn. */
import type { Ctx } from '../context';
import { assert, skip } from '../assert';
import { runCommand, sleep, waitForWorkbench } from '../workbench';
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
    // Put the panel back on scenario 3's turn (scenario 5 moved it), from the panel itself.
    let frame = await showPanel(ctx);
    const want = { line: r.line, segmentIds: r.segments.map((s) => s.id) };
    try {
      await waitPanelTurn(frame, want, 3000);
    } catch {
      skip('panel was not on the scenario-3 turn before reload (depends on the editor of that log)');
    }
    await runCommand(ctx.page, 'Developer: Reload Window', { timeout: 15_000 });
    await sleep(2000);
    await waitForWorkbench(ctx.page);
    // The panel restores itself (webview view state); do not open it again before looking.
    try {
      frame = await panelFrame(ctx, 45_000);
    } catch {
      throw new Error('after reload the panel did not come back by itself');
    }
    await waitPanelTurn(frame, want, 30_000);
    const selectedRowLine = await frame.locator('.turn-row[aria-selected="true"]').first().getAttribute('data-line').catch(() => null);
    assert(selectedRowLine === null || Number(selectedRowLine) === r.line, `turn list selects line ${selectedRowLine}, expected ${r.line}`);
    ctx.log(`after reload the panel shows line ${r.line} (${r.conversation} turn ${r.turn})`);
  },
};
