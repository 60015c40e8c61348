import { describe, expect, it } from 'vitest';
import { LIMITS, parseHostMessage, parseWebviewMessage } from '../../extension/protocol/validate';
import { COMPARISON_HOST_EXAMPLES, COMPARISON_WEBVIEW_EXAMPLES, PAYLOAD, TURN_VIEW } from './repackFixtures';

describe('re-pack messages cross the webview boundary', () => {
  it('round-trip through JSON (what postMessage carries)', () => {
    for (const m of Object.values(COMPARISON_WEBVIEW_EXAMPLES).flat()) expect(parseWebviewMessage(JSON.parse(JSON.stringify(m)))).toEqual({ ok: true, message: m });
    for (const m of Object.values(COMPARISON_HOST_EXAMPLES).flat()) expect(parseHostMessage(JSON.parse(JSON.stringify(m)))).toEqual({ ok: true, message: m });
  });

  it('keep untrusted payload text as data', () => {
    const wire = JSON.parse(JSON.stringify({ type: 'comparisonTurn', requestId: 1, view: TURN_VIEW }));
    const parsed = parseHostMessage(wire);
    expect(parsed.ok && parsed.message.type === 'comparisonTurn' && parsed.message.view.a.segments[1]!.preview).toBe(PAYLOAD);
  });

  const bad: Array<[string, unknown, RegExp]> = [
    ['page without limit', { type: 'requestComparisonPage', requestId: 1, offset: 0 }, /missing "limit"/],
    ['page limit over the cap', { type: 'requestComparisonPage', requestId: 1, offset: 0, limit: LIMITS.maxLimit + 1 }, /bad "limit"/],
    ['negative page offset', { type: 'requestComparisonPage', requestId: 1, offset: -1, limit: 10 }, /bad "offset"/],
    ['fractional turn line', { type: 'requestComparisonTurn', requestId: 1, line: 2.5 }, /bad "line"/],
    ['turn line 0', { type: 'requestComparisonTurn', requestId: 1, line: 0 }, /bad "line"/],
    ['turn request with a path', { type: 'requestComparisonTurn', requestId: 1, line: 2, file: '/etc/passwd' }, /unexpected "file"/],
    ['string requestId', { type: 'requestComparisonTurn', requestId: '1', line: 2 }, /bad "requestId"/],
  ];
  for (const [what, m, why] of bad)
    it(`rejects ${what}`, () => {
      const r = parseWebviewMessage(m);
      expect(r.ok).toBe(false);
      expect(!r.ok && r.error).toMatch(why);
    });

  it('rejects malformed host envelopes', () => {
    expect(parseHostMessage({ type: 'comparisonReady', summary: {} }).ok).toBe(false); // no reveal
    expect(parseHostMessage({ type: 'comparisonReady', summary: [], reveal: true }).ok).toBe(false);
    expect(parseHostMessage({ type: 'comparisonPage', requestId: 1, generation: 1, offset: 0, total: 1, rows: {} }).ok).toBe(false);
    expect(parseHostMessage({ type: 'sweepReady', sweep: {}, reveal: 'yes' }).ok).toBe(false);
  });

  it('accepts the sweep view as a restored panel state', () => {
    expect(parseWebviewMessage({ type: 'ready', state: { view: 'sweep' } }).ok).toBe(true);
    expect(parseWebviewMessage({ type: 'ready', state: { view: 'compare' } }).ok).toBe(true);
    expect(parseWebviewMessage({ type: 'ready', state: { view: 'graphs' } }).ok).toBe(false);
  });
});
