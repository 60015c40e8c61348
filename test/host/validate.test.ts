import { describe, expect, it } from 'vitest';
import type { HostMessage, WebviewMessage } from '../../extension/protocol/messages';
import { LIMITS, parseHostMessage, parseWebviewMessage } from '../../extension/protocol/validate';
import { COMPARISON_HOST_EXAMPLES, COMPARISON_WEBVIEW_EXAMPLES } from './repackFixtures';

/** One valid example of every webview → host message type (the Record type makes a missing one a type error). */
const WEBVIEW_EXAMPLES: { [K in WebviewMessage['type']]: Extract<WebviewMessage, { type: K }>[] } = {
  ready: [{ type: 'ready' }, { type: 'ready', state: { line: 3, segmentId: 'p1', view: 'overview' } }, { type: 'ready', state: {} }],
  requestTurns: [{ type: 'requestTurns', requestId: 1, offset: 0, limit: 100 }],
  requestTurn: [{ type: 'requestTurn', requestId: 2, line: 7 }],
  requestConversation: [{ type: 'requestConversation', requestId: 3, conversation: 'c-9' }],
  requestOverview: [{ type: 'requestOverview', requestId: 4 }],
  requestTokenBoundaries: [{ type: 'requestTokenBoundaries', requestId: 5, line: 7, segmentId: 'p2' }],
  revealLine: [{ type: 'revealLine', line: 7 }, { type: 'revealLine', line: 7, segmentId: 'p2' }],
  metric: [{ type: 'metric', name: 'firstPaintMs', value: 123.4 }],
  ...COMPARISON_WEBVIEW_EXAMPLES,
};

const row = { line: 1, conversation: 'c', turn: 1, used: 1, budget: 2, window: 3, reserve: 1, state: 'ok', byKind: { instructions: 0, history: 0, query: 0, passage: 0, tool: 0 }, framing: 0, joins: 0, clipped: 0, dropped: 0 } as const;
const HOST_EXAMPLES: { [K in HostMessage['type']]: Extract<HostMessage, { type: K }>[] } = {
  logOpened: [{ type: 'logOpened', file: 'a.jsonl', turns: 3 }, { type: 'logOpened', file: 'a.jsonl', turns: 3, selectLine: 2 }],
  logClosed: [{ type: 'logClosed' }],
  turns: [{ type: 'turns', requestId: 1, offset: 0, total: 1, rows: [row] }],
  turn: [{ type: 'turn', requestId: 2, detail: { row, model: 'm', encoding: 'o200k_base', framingProfile: 'chat', plan: 'recent-first', fatesFrom: 'plan', free: 1, over: 0, spill: 0, notes: [], segments: [] } }],
  conversation: [{ type: 'conversation', requestId: 3, conversation: 'c', rows: [row] }],
  overview: [{ type: 'overview', requestId: 4, overview: { file: 'a', turns: 1, conversations: 1, overBudget: 0, overBeforePassages: 0, rank1Clipped: 0, rank1Dropped: 0, malformed: 0, spill: 0, useHistogram: [], worst: [] } }],
  tokenBoundaries: [{ type: 'tokenBoundaries', requestId: 5, line: 1, segmentId: 'p', boundaries: [1, 2] }],
  selectTurn: [{ type: 'selectTurn', line: 4 }],
  progress: [{ type: 'progress', done: 1, label: 'x' }, { type: 'progress', done: 1, total: 2, label: 'x' }],
  error: [{ type: 'error', message: 'x' }, { type: 'error', requestId: 9, message: 'x' }],
  ...COMPARISON_HOST_EXAMPLES,
};

describe('parseWebviewMessage', () => {
  for (const [type, examples] of Object.entries(WEBVIEW_EXAMPLES)) {
    it(`round-trips every ${type} example through JSON (what postMessage carries)`, () => {
      for (const m of examples) {
        const wire: unknown = JSON.parse(JSON.stringify(m));
        expect(parseWebviewMessage(wire)).toEqual({ ok: true, message: m });
      }
    });
  }

  it('accepts optional keys present with undefined (structured clone keeps them)', () => {
    expect(parseWebviewMessage({ type: 'ready', state: { line: 2, segmentId: undefined } }).ok).toBe(true);
  });

  const bad: Array<[string, unknown]> = [
    ['null', null],
    ['a string', 'ready'],
    ['an array', [{ type: 'ready' }]],
    ['no type', { requestId: 1 }],
    ['unknown type', { type: 'deleteFile', path: '/' }],
    ['prototype key as type', { type: 'toString' }],
    ['extra key', { type: 'requestOverview', requestId: 1, extra: true }],
    ['missing requestId', { type: 'requestOverview' }],
    ['string requestId', { type: 'requestOverview', requestId: '1' }],
    ['fractional line', { type: 'requestTurn', requestId: 1, line: 1.5 }],
    ['line 0 (lines are 1-based)', { type: 'requestTurn', requestId: 1, line: 0 }],
    ['negative offset', { type: 'requestTurns', requestId: 1, offset: -1, limit: 10 }],
    ['limit 0', { type: 'requestTurns', requestId: 1, offset: 0, limit: 0 }],
    ['limit over the page cap', { type: 'requestTurns', requestId: 1, offset: 0, limit: LIMITS.maxLimit + 1 }],
    ['NaN limit', { type: 'requestTurns', requestId: 1, offset: 0, limit: NaN }],
    ['empty segment id', { type: 'requestTokenBoundaries', requestId: 1, line: 1, segmentId: '' }],
    ['huge conversation id', { type: 'requestConversation', requestId: 1, conversation: 'x'.repeat(LIMITS.maxString + 1) }],
    ['bad panel view', { type: 'ready', state: { view: 'settings' } }],
    ['extra key in state', { type: 'ready', state: { line: 1, html: '<b>' } }],
    ['unknown metric', { type: 'metric', name: 'other', value: 1 }],
    ['negative metric', { type: 'metric', name: 'firstPaintMs', value: -1 }],
    ['infinite metric', { type: 'metric', name: 'firstPaintMs', value: Infinity }],
  ];
  for (const [what, msg] of bad) {
    it(`rejects ${what}`, () => {
      const r = parseWebviewMessage(msg);
      expect(r.ok).toBe(false);
      if (!r.ok) expect(r.error.length).toBeGreaterThan(0);
    });
  }
});

describe('parseHostMessage', () => {
  for (const [type, examples] of Object.entries(HOST_EXAMPLES)) {
    it(`round-trips every ${type} example`, () => {
      for (const m of examples) expect(parseHostMessage(JSON.parse(JSON.stringify(m)))).toEqual({ ok: true, message: m });
    });
  }
  it('rejects unknown and ill-typed host messages', () => {
    expect(parseHostMessage({ type: 'eval', code: 'x' }).ok).toBe(false);
    expect(parseHostMessage({ type: 'selectTurn', line: '3' }).ok).toBe(false);
    expect(parseHostMessage({ type: 'turns', requestId: 1, offset: 0, total: 1, rows: 'x' }).ok).toBe(false);
  });
});
