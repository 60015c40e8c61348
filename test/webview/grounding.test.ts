// @vitest-environment happy-dom
import { describe, expect, it, vi } from 'vitest';
import type { GroundingView } from '../../extension/protocol/grounding';
import { renderGrounding } from '../../webview/src/groundingView';

const PAYLOAD = '<img src=x onerror="alert(1)">Fares are <b>free</b> & "easy".';

// A hand-written view: one sentence of each label; the lost one rests on the spilled text of p2,
// clipped at character 44, with three of its four words after the cut.
const VIEW: GroundingView = {
  sentences: [
    { index: 0, start: 0, end: 23, text: 'Night buses run hourly.', label: 'supported', contentWords: 4, support: { id: 'p1', kind: 'passage', part: 'kept', share: 1, overlap: ['night', 'buses', 'run', 'hourly'] } },
    {
      index: 1, start: 24, end: 56, text: 'Seniors ride free with a "pass".', label: 'lost', contentWords: 4,
      support: { id: 'p2', kind: 'passage', part: 'spilled', share: 1, overlap: ['seniors', 'ride', 'free', 'pass'] },
      lost: { fate: 'clipped', cutChar: 44, afterCut: ['ride', 'free', 'pass'], beforeCut: ['seniors'] },
    },
    { index: 2, start: 57, end: 120, text: PAYLOAD, label: 'unsupported', contentWords: 6, support: null },
    { index: 3, start: 121, end: 128, text: 'Thanks!', label: 'skipped', contentWords: 0, support: null },
  ],
  counts: { supported: 1, unsupported: 1, lost: 1, skipped: 1 },
  knowledgeF1: 0.5,
  knowledgeF1Basis: 'evidence',
  flags: ['unsupported-sentences', 'evidence-lost', 'stale-passages'],
  lexical: { tau: 0.33, best: 'p1', bestRank: 1, ratio: null, flagged: false },
  duplicates: { pairs: [{ a: 'p1', b: 'p3', resemblance: 0.75, wastedTokens: 12 }], wastedTokens: 12 },
  stale: ['p3'],
  position: { best: 'p1', position: 1, of: 3, third: 'first', flagged: false },
};

describe('renderGrounding', () => {
  const onSelect = vi.fn();
  const el = renderGrounding({ grounding: VIEW, onSelect });
  document.body.replaceChildren(el);
  const items = Array.from(el.querySelectorAll('li.g-sentence'));

  it('is a region named "Reply grounding"', () => {
    expect(el.getAttribute('role')).toBe('region');
    expect(el.getAttribute('aria-label')).toBe('Reply grounding');
    expect(el.querySelector('h2')!.textContent).toBe('Reply grounding');
  });

  it('labels each sentence with an icon and a word, not colour alone', () => {
    expect(items.map((li) => li.querySelector('.g-label')!.textContent)).toEqual(['✓ supported', '✂ lost to the budget', '⚠ unsupported', '– skipped']);
    expect(items.map((li) => li.getAttribute('aria-label'))).toEqual([
      'Sentence 1: supported',
      'Sentence 2: lost to the budget',
      'Sentence 3: unsupported',
      'Sentence 4: skipped',
    ]);
  });

  it('renders a payload sentence as text, never as markup', () => {
    const q = items[2]!.querySelector('q.g-text')!;
    expect(q.textContent).toBe(PAYLOAD);
    expect(el.querySelector('img')).toBeNull();
    expect(el.querySelector('b')).toBeNull();
  });

  it('says where a lost sentence rests and which words lie after the cut', () => {
    expect(items[1]!.querySelector('.g-support')!.textContent).toBe(
      'only in p2 (clipped at character 44) · 4 of 4 content words (100.0%) · after the cut: ride, free, pass (before it: seniors)',
    );
    expect(items[0]!.querySelector('.g-support')!.textContent).toBe('rests on p1 (passage, sent part) · 4 of 4 content words (100.0%) · shared words: night, buses, run, hourly');
    expect(items[2]!.querySelector('.g-support')!.textContent).toBe('no passage shares a content word with it');
  });

  it('selects the passage when its button is clicked or activated from the keyboard', () => {
    const button = items[1]!.querySelector<HTMLButtonElement>('button[data-segment="p2"]')!;
    expect(button.tagName).toBe('BUTTON'); // native button: focusable, Enter/Space activate it
    button.click();
    expect(onSelect).toHaveBeenLastCalledWith('p2');
    el.querySelector<HTMLButtonElement>('.g-facts button[data-segment="p3"]')!.click();
    expect(onSelect).toHaveBeenLastCalledWith('p3');
  });

  it('lists the figures and the flags', () => {
    const facts = Array.from(el.querySelectorAll('.g-facts > li')).map((li) => li.textContent);
    expect(facts).toEqual([
      '1 supported · 1 unsupported · 1 lost to the budget · 1 skipped',
      'Knowledge F1 0.500 (against the reviewer-marked evidence)',
      'Retriever rank vs BM25+: Kendall tau 0.33 · best lexical match p1 (rank 1)',
      'Carrying passage p1 sent at position 1 of 3 (first third)',
      'Near-duplicates p3 of p1 · resemblance 75.0% · 12 tokens wasted',
      'Stale: p3',
    ]);
    expect(Array.from(el.querySelectorAll('.g-flags li')).map((li) => li.textContent)).toEqual([
      '⚑ unsupported-sentences: a reply sentence no sent passage supports',
      '⚑ evidence-lost: a reply sentence supported only by clipped or dropped text',
      '⚑ stale-passages: stale passages',
    ]);
  });

  it('says so when there is no reply', () => {
    const empty = renderGrounding({ grounding: { ...VIEW, sentences: [], flags: [] }, onSelect });
    expect(empty.textContent).toContain('This turn has no reply to check.');
    expect(empty.textContent).toContain('No grounding flags.');
  });
});
