import { describe, expect, it } from 'vitest';
import { sentenceSupport, splitSentences, type SupportPart } from '../../../extension/core/analysis/sentences';

const thresholds = { supportShare: 0.5, supportMinWords: 2, sentenceMinWords: 3 };

describe('splitSentences (Intl.Segmenter, granularity "sentence")', () => {
  it('gives trimmed sentences with their UTF-16 offsets in the reply', () => {
    const reply = 'Trams run late.  Buses too!\nAsk at the desk';
    const spans = splitSentences(reply);
    expect(spans.map((s) => s.text)).toEqual(['Trams run late.', 'Buses too!', 'Ask at the desk']);
    for (const s of spans) expect(reply.slice(s.start, s.end)).toBe(s.text);
  });
});

// Hand-made turn: labels a reader can check by eye. Content words exclude the `stopword` English list.
describe('sentenceSupport on a hand-made turn', () => {
  const kept: SupportPart = {
    id: 'p1',
    kind: 'passage',
    part: 'kept',
    text: 'The Blue Line tram runs every 10 minutes from Harbour Square to the university.',
  };
  // p2 was clipped after its first sentence: the kept part and the whole passage (spilled side).
  const p2Text = 'Single tickets cost 3 dollars. Children under 6 ride free with a paying adult.';
  const p2Kept: SupportPart = { id: 'p2', kind: 'passage', part: 'kept', text: p2Text.slice(0, p2Text.indexOf(' Children')) };
  const p2Spilled: SupportPart = { id: 'p2', kind: 'passage', part: 'spilled', text: p2Text };
  const dropped: SupportPart = { id: 'p3', kind: 'passage', part: 'spilled', text: 'Lost property is kept for 30 days at the Harbour Square office.' };
  const parts = [kept, p2Kept, dropped, p2Spilled];

  const reply =
    'The Blue Line tram runs every 10 minutes from Harbour Square. ' + // p1 says exactly this
    'Single tickets cost 3 dollars. ' + //                                p2's kept sentence
    'Children under 6 ride free with a paying adult. ' + //              only p2's clipped text
    'Dogs must travel in a closed carrier on every tram. ' + //          nobody says this
    'Happy travels!'; //                                                 pleasantry, 2 content words
  const result = sentenceSupport(reply, parts, thresholds);

  it('labels each sentence', () => {
    expect(result.map((s) => s.label)).toEqual(['supported', 'supported', 'lost', 'unsupported', 'skipped']);
  });
  it('names the supporting passage and the overlapping words', () => {
    // content words: blue, line, tram, runs, every, 10, minutes, harbour, square — all in p1
    expect(result[0]!.kept).toEqual({
      id: 'p1',
      kind: 'passage',
      part: 'kept',
      share: 1,
      overlap: ['blue', 'line', 'tram', 'runs', 'every', '10', 'minutes', 'harbour', 'square'],
    });
    expect(result[1]!.kept?.id).toBe('p2');
  });
  it('the lost sentence is covered only by the clipped remainder of p2', () => {
    // content words: children, 6, ride, free, paying, adult (6; "under", "with", "a" are stopwords).
    // p2's kept part has none of them; the whole of p2 has all 6 → share 1 on the spilled side.
    const lost = result[2]!;
    expect(lost.contentWords).toBe(6);
    expect(lost.kept).toBeNull();
    expect(lost.spilled).toEqual({
      id: 'p2',
      kind: 'passage',
      part: 'spilled',
      share: 1,
      overlap: ['children', '6', 'ride', 'free', 'paying', 'adult'],
    });
  });
  it('the unsupported sentence shares too little with anything', () => {
    // content words: dogs, travel, closed, carrier, every, tram (6); p1 has "every" and "tram":
    // share 2/6 = 1/3 < 0.5
    const s = result[3]!;
    expect(s.kept?.id).toBe('p1');
    expect(s.kept?.share).toBeCloseTo(2 / 6, 12);
    expect(s.kept?.overlap).toEqual(['every', 'tram']);
  });
  it('thresholds are parameters: at share 0.3 the dog sentence counts as supported', () => {
    const loose = sentenceSupport(reply, parts, { ...thresholds, supportShare: 0.3 });
    expect(loose[3]!.label).toBe('supported');
  });
  it('a sentence supported by a kept part is never "lost", even if spilled text also covers it', () => {
    const both = sentenceSupport('Single tickets cost 3 dollars.', [p2Kept, p2Spilled], thresholds);
    expect(both[0]!.label).toBe('supported');
  });
  it('on equal share the earlier part (best rank) wins', () => {
    const twin: SupportPart = { ...kept, id: 'p9' };
    expect(sentenceSupport('Blue Line trams run every 10 minutes.', [kept, twin], thresholds)[0]!.kept?.id).toBe('p1');
  });
});
