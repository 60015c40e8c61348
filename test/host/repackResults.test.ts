import { describe, expect, it, vi } from 'vitest';

// The host module imports `vscode`; only its EventEmitter is used by RepackResults.
vi.mock('vscode', () => ({
  EventEmitter: class<T> {
    private ls: Array<(v: T) => void> = [];
    event = (l: (v: T) => void) => {
      this.ls.push(l);
      return { dispose: () => undefined };
    };
    fire(v: T): void {
      this.ls.forEach((l) => l(v));
    }
    dispose(): void {
      this.ls = [];
    }
  },
}));

import { RepackResults } from '../../extension/host/repack';
import { ComparisonCollector } from '../../extension/core/view/comparison';
import type { HostMessage } from '../../extension/protocol/messages';
import { SUMMARY, SWEEP, turnComparison } from './repackFixtures';

function held(results: RepackResults) {
  const c = new ComparisonCollector({ add() {}, result: () => SUMMARY.totals });
  for (let l = 1; l <= 3; l++) c.add(turnComparison({ line: l }), l, { offsetA: 0, offsetB: 0 });
  return { summary: { ...SUMMARY, generation: results.nextGeneration(), rows: 3 }, store: c.finish(), source: {} as never, target: {} as never };
}

describe('RepackResults', () => {
  it('reveals a result once: live to a ready panel, or with the first announcement when the panel was closed', () => {
    const r = new RepackResults();
    const got: HostMessage[] = [];
    r.onDidPublish((m) => got.push(m));
    r.setComparison(held(r));
    expect(got).toMatchObject([{ type: 'comparisonReady', reveal: true }]);
    // panel closed: nothing delivered, so the webview's first `ready` switches to it
    expect(r.announcements()).toMatchObject([{ type: 'comparisonReady', reveal: true }]);
    // a later reload keeps the user's view
    expect(r.announcements()).toMatchObject([{ type: 'comparisonReady', reveal: false }]);
    r.setSweep(SWEEP);
    r.delivered('sweepReady');
    expect(r.announcements()).toEqual([
      { type: 'comparisonReady', summary: expect.anything(), reveal: false },
      { type: 'sweepReady', sweep: SWEEP, reveal: false },
    ]);
  });

  it('answers pages of the held comparison and refuses turns it does not list', async () => {
    const r = new RepackResults();
    expect(await r.answer({ type: 'requestComparisonPage', requestId: 1, offset: 0, limit: 10 })).toMatchObject({ type: 'error', requestId: 1 });
    r.setComparison(held(r));
    const page = await r.answer({ type: 'requestComparisonPage', requestId: 2, offset: 1, limit: 10 });
    expect(page).toMatchObject({ type: 'comparisonPage', requestId: 2, generation: 1, offset: 1, total: 3 });
    expect(page.type === 'comparisonPage' && page.rows.map((x) => x.line)).toEqual([2, 3]);
    expect(await r.answer({ type: 'requestComparisonTurn', requestId: 3, line: 99 })).toEqual({ type: 'error', requestId: 3, message: 'Line 99 is not in the comparison list.' });
  });
});
