// @vitest-environment happy-dom
import { describe, expect, it } from 'vitest';
import { PanelApp } from '../../webview/src/app';
import type { PanelState, TurnDetail, WebviewMessage } from '../../extension/protocol/messages';
import type { VsCodeApi } from '../../webview/src/vscodeApi';
import { DETAIL } from './viewModels';

// DETAIL's p2 is clipped at character 31 ("Fares: a day pass costs £6.40. " | "Refunds are paid …").
const GROUNDED: TurnDetail = {
  ...DETAIL,
  reply: 'Refunds are paid within ten working days.',
  grounding: {
    sentences: [
      {
        index: 0, start: 0, end: 41, text: 'Refunds are paid within ten working days.', label: 'lost', contentWords: 5,
        support: { id: 'p2', kind: 'passage', part: 'spilled', share: 1, overlap: ['refunds', 'paid', 'within', 'ten', 'working'] },
        lost: { fate: 'clipped', cutChar: 31, afterCut: ['refunds', 'paid', 'within', 'ten', 'working'], beforeCut: [] },
      },
    ],
    counts: { supported: 0, unsupported: 0, lost: 1, skipped: 0 },
    knowledgeF1: 0.4,
    knowledgeF1Basis: 'best-passage',
    flags: ['evidence-lost'],
    lexical: null,
    duplicates: { pairs: [], wastedTokens: 0 },
    stale: [],
    position: { best: null, position: null, of: 2, third: null, flagged: false },
  },
};

describe('panel turn view with grounding', () => {
  it('mounts the Reply grounding section and a click on the passage shows its cut view', () => {
    const posted: WebviewMessage[] = [];
    let state: PanelState | undefined = { line: 7, segmentId: 'p1', view: 'turn' };
    const api: VsCodeApi = { postMessage: (m: WebviewMessage) => void posted.push(m), getState: () => state, setState: (s: PanelState) => void (state = s) };
    const root = document.createElement('main');
    document.body.replaceChildren(root);
    const app = new PanelApp(root, api);
    app.start();
    app.handle({ type: 'logOpened', file: '/logs/fares.jsonl', turns: 3, selectLine: 7 });
    const req = [...posted].reverse().find((m) => m.type === 'requestTurn') as Extract<WebviewMessage, { type: 'requestTurn' }>;
    app.handle({ type: 'turn', requestId: req.requestId, detail: GROUNDED });

    const region = root.querySelector('[role="region"][aria-label="Reply grounding"]')!;
    expect(region).not.toBeNull();
    expect(root.querySelector('.passage')!.getAttribute('data-segment')).toBe('p1');
    region.querySelector<HTMLButtonElement>('button[data-segment="p2"]')!.click();
    // The segment text now shows p2, split at its cut.
    const passage = root.querySelector('.passage')!;
    expect(passage.getAttribute('data-segment')).toBe('p2');
    expect(passage.querySelector('[data-part="spilled"]')!.textContent).toBe('Refunds are paid within ten working days of the claim.');
    expect(state!.segmentId).toBe('p2');
    expect(posted.at(-1)).toEqual({ type: 'revealLine', line: 7, segmentId: 'p2' });
  });

  it('shows no grounding section when the detail carries none', () => {
    const root = document.createElement('main');
    const posted: WebviewMessage[] = [];
    const api: VsCodeApi = { postMessage: (m: WebviewMessage) => void posted.push(m), getState: () => undefined, setState: () => undefined };
    const app = new PanelApp(root, api);
    app.handle({ type: 'logOpened', file: 'f', turns: 1, selectLine: 7 });
    const req = posted.find((m) => m.type === 'requestTurn') as Extract<WebviewMessage, { type: 'requestTurn' }>;
    app.handle({ type: 'turn', requestId: req.requestId, detail: DETAIL });
    expect(root.querySelector('.passage')).not.toBeNull(); // the turn view did render
    expect(root.querySelector('[aria-label="Reply grounding"]')).toBeNull();
  });
});
