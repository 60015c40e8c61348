import { describe, expect, it } from 'vitest';
import { words } from '../../extension/core/analysis/index';
import {
  groundingDiagnostics,
  locateGroundingLine,
  passageGroundingRows,
  readGroundingSettings,
  sentenceAt,
  sentenceColumns,
  sentenceHoverRows,
  toGroundingView,
} from '../../extension/core/view/grounding';
import { ALL_CHECKS, problemReasons } from '../../extension/core/view/problems';
import { readEditorSettings } from '../../extension/core/view/settings';
import { toTurnDetail } from '../../extension/core/view/viewModels';
import { checkGroundingView } from '../../extension/protocol/grounding';
import { parseHostMessage } from '../../extension/protocol/validate';
import { analysis, groundedRecord, LINE, P2_TEXT, R } from './groundingFixture';

const rec = groundedRecord();
const diags = groundingDiagnostics(rec, LINE, ALL_CHECKS);
const byCode = (code: string) => diags.filter((d) => d.code === code);

describe('sentence ranges on the record line', () => {
  it('locates the reply literal', () => {
    expect(locateGroundingLine(LINE)!.reply!.start).toBe(R);
    expect(LINE[R]).toBe('"');
  });

  it('maps sentence offsets through the \\n and \\" escapes (columns counted by hand)', () => {
    const reply = locateGroundingLine(LINE)!.reply!;
    // sentence 0: decoded [0, 23) → raw R+1 .. R+24 (no escape before it)
    expect(sentenceColumns(LINE, reply, 0, 23)).toEqual({ start: R + 1, end: R + 24 });
    // sentence 1: decoded 24 sits after "\n" (2 raw units) → R+26; two \" inside add 2 → end R+60
    expect(sentenceColumns(LINE, reply, 24, 56)).toEqual({ start: R + 26, end: R + 60 });
    // sentence 2: decoded [57, 79) → R+61 .. R+83 (the closing quote)
    expect(sentenceColumns(LINE, reply, 57, 79)).toEqual({ start: R + 61, end: R + 83 });
    expect(LINE[R + 83]).toBe('"');
  });
});

describe('groundingDiagnostics', () => {
  it('raises one diagnostic per finding with the documented code and severity', () => {
    expect(diags.map((d) => [d.code, d.severity])).toEqual([
      ['spillway.evidence-lost-to-budget', 'warning'],
      ['spillway.unsupported-sentence', 'information'],
      ['spillway.lexical-mismatch', 'information'],
      ['spillway.near-duplicates', 'information'],
      ['spillway.middle-position', 'information'],
      ['spillway.stale-passage', 'information'],
    ]);
    expect(diags.every((d) => d.line === 4)).toBe(true);
  });

  it('underlines exactly the lost sentence, raw escapes included, and points at the spilled text', () => {
    const d = byCode('spillway.evidence-lost-to-budget')[0]!;
    expect(LINE.slice(d.start, d.end)).toBe(String.raw`Seniors ride free with a \"pass\".`);
    expect([d.start, d.end]).toEqual([R + 26, R + 60]);
    expect(d.message).toBe(
      'Reply sentence 2 is supported only by text the budget cut: 4 of 4 content words (100%) are in the clipped passage "p2" (cut at character 44), ' +
        'and no sent part supports it. Words: seniors, ride, free, pass.',
    );
    // related: p2's text from the cut (character 44) to its closing quote
    const rel = d.related![0]!;
    expect(LINE.slice(rel.start, rel.end)).toBe(' Seniors ride free with a pass.');
    expect(rel.start).toBe(LINE.indexOf(P2_TEXT) + 44);
  });

  it('underlines the unsupported sentence', () => {
    const d = byCode('spillway.unsupported-sentence')[0]!;
    expect(LINE.slice(d.start, d.end)).toBe('Trams fly to the moon.');
    expect(d.message).toContain('Reply sentence 3 is not supported by any sent passage');
    expect(d.message).toContain('No passage shares a content word with it.');
    expect(d.related).toBeUndefined();
  });

  it('names the closest part of an unsupported sentence', () => {
    const a = analysis();
    a.sentences[2] = { ...a.sentences[2]!, kept: { id: 'p1', kind: 'passage', part: 'kept', share: 1 / 3, overlap: ['trams'] } };
    const d = groundingDiagnostics(groundedRecord(a), LINE, ALL_CHECKS).find((x) => x.code === 'spillway.unsupported-sentence')!;
    // 1 of 3 content words = 33.3%
    expect(d.message).toContain('Closest: the sent part of passage "p1", 1 of 3 content words (33.3%).');
    expect(LINE.slice(d.related![0]!.start, d.related![0]!.end)).toBe('"Night buses run hourly."');
  });

  it('puts passage findings on the passage text literal', () => {
    const p1 = '"Night buses run hourly."';
    const p2 = `"${P2_TEXT}"`;
    const at = (code: string) => byCode(code).map((d) => LINE.slice(d.start, d.end));
    expect(at('spillway.lexical-mismatch')).toEqual([p2]);
    expect(at('spillway.near-duplicates')).toEqual([p2]);
    expect(at('spillway.middle-position')).toEqual([p1]);
    expect(at('spillway.stale-passage')).toEqual([p1]);
    expect(byCode('spillway.lexical-mismatch')[0]!.message).toBe(
      'Passage "p2" has retriever rank 2 but is by far the best BM25+ match for the query (2.8× the runner-up). Kendall\'s tau-b between retriever rank and BM25+ is -1.00.',
    );
    expect(byCode('spillway.near-duplicates')[0]!.message).toBe(
      'Passage "p2" nearly duplicates "p1" (resemblance 60%, containment up to 90%, 3-word shingles, exact): 9 tokens sent for repeated text.',
    );
    // ageDays 2525.4 → 2,525 whole days
    expect(byCode('spillway.stale-passage')[0]!.message).toBe('Passage "p1" is dated 2020-01-01, 2,525 days old at 2026-12-01T00:00:00Z: older than 365 days.');
    expect(byCode('spillway.middle-position')[0]!.message).toContain('position 3 of 5');
  });

  it('honours each check switch and reports nothing without an analysis', () => {
    const off = { ...ALL_CHECKS, unsupportedSentence: false, evidenceLostToBudget: false, lexicalMismatch: false, nearDuplicates: false, middlePosition: false, stalePassage: false };
    expect(groundingDiagnostics(rec, LINE, off)).toEqual([]);
    expect(groundingDiagnostics(rec, LINE, { ...ALL_CHECKS, stalePassage: false }).map((d) => d.code)).not.toContain('spillway.stale-passage');
    const { analysis: _a, ...bare } = rec.ledger;
    expect(groundingDiagnostics({ line: 4, ledger: bare }, LINE, ALL_CHECKS)).toEqual([]);
  });

  it('falls back to the whole record when the line has no reply literal', () => {
    const line = '{"v":1,"segments":[]}';
    const d = groundingDiagnostics(rec, line, ALL_CHECKS).find((x) => x.code === 'spillway.unsupported-sentence')!;
    expect([d.start, d.end]).toEqual([0, line.length]);
  });

  it('makes a problem turn of unsupported and lost sentences only', () => {
    expect(problemReasons(rec, ALL_CHECKS)).toEqual(['unsupported sentence', 'evidence lost to the budget']);
    expect(problemReasons(rec, { ...ALL_CHECKS, unsupportedSentence: false, evidenceLostToBudget: false })).toEqual([]);
  });
});

describe('hover rows', () => {
  const a = analysis();
  it('finds the sentence under a decoded offset (the newline between sentences belongs to none)', () => {
    expect(sentenceAt(a, 0)!.index).toBe(0);
    expect(sentenceAt(a, 23)).toBeUndefined();
    expect(sentenceAt(a, 30)!.index).toBe(1);
    expect(sentenceAt(a, 78)!.index).toBe(2);
  });

  it('shows the label, the supporting part and the shared words', () => {
    expect(sentenceHoverRows(a, a.sentences[1]!)).toEqual([
      { label: 'Sentence 2 of 3', value: '✂ evidence lost to the budget' },
      { label: 'Best sent part', value: 'passage p2, sent part · 1 of 4 content words (25%)' },
      { label: 'Shared words', value: 'seniors' },
      { label: 'Only in', value: 'passage p2, spilled text · 4 of 4 content words (100%)' },
      { label: 'Spilled words', value: 'seniors, ride, free, pass' },
      { label: 'Knowledge F1 (reply)', value: '0.500 against the best passage' },
    ]);
    expect(sentenceHoverRows(a, a.sentences[0]!)[1]).toEqual({ label: 'Supported by', value: 'passage p1, sent part · 4 of 4 content words (100%)' });
  });

  it('adds Knowledge F1 and BM25+ rank to a passage', () => {
    expect(passageGroundingRows(a, 'p2')).toEqual([
      { label: 'Knowledge F1', value: '0.400 (full text) · 0.100 (sent part)' },
      { label: 'BM25+ vs query', value: 'rank 1 of 2 (score 3.50); retriever rank 2' },
      { label: 'Reply sentences', value: '0 supported by its sent part, 1 only by its spilled text' },
    ]);
    expect(passageGroundingRows(a, 'nope')).toEqual([]);
  });
});

describe('panel view model', () => {
  it('keeps what the panel shows and says which supporting words lie after the cut', () => {
    const v = toGroundingView(rec.ledger.analysis!, rec.record, rec.ledger, words);
    expect(v.sentences.map((s) => [s.label, s.support?.id ?? null, s.support?.part ?? null])).toEqual([
      ['supported', 'p1', 'kept'],
      ['lost', 'p2', 'spilled'],
      ['unsupported', null, null],
    ]);
    // The kept part of p2 is "Seniors: see below. Pets travel in carriers." — it has "seniors" only.
    expect(v.sentences[1]!.lost).toEqual({ fate: 'clipped', cutChar: 44, afterCut: ['ride', 'free', 'pass'], beforeCut: ['seniors'] });
    expect(v.duplicates).toEqual({ pairs: [{ a: 'p1', b: 'p2', resemblance: 0.6, wastedTokens: 9 }], wastedTokens: 9 });
    expect(v.stale).toEqual(['p1']);
    expect(v.position).toEqual({ best: 'p1', position: 3, of: 5, third: 'middle', flagged: true });
    expect(checkGroundingView(v)).toBeUndefined();
  });

  it('without the tokenizer every overlap word of a lost sentence counts as after the cut', () => {
    const v = toGroundingView(rec.ledger.analysis!, rec.record, rec.ledger);
    expect(v.sentences[1]!.lost!.afterCut).toEqual(['seniors', 'ride', 'free', 'pass']);
  });

  it('rides in the turn detail only when the audit ran the analysis', () => {
    expect(toTurnDetail(rec, words).grounding?.counts).toEqual({ supported: 1, unsupported: 1, lost: 1, skipped: 0 });
    const { analysis: _a, ...bare } = rec.ledger;
    expect(toTurnDetail({ record: rec.record, ledger: bare }).grounding).toBeUndefined();
  });
});

describe('protocol validation of detail.grounding', () => {
  const detail = toTurnDetail(rec, words);
  const msg = (grounding: unknown) => ({ type: 'turn', requestId: 1, detail: { ...detail, grounding } });
  it('accepts the builder output and a detail without grounding', () => {
    expect(parseHostMessage(msg(detail.grounding)).ok).toBe(true);
    const { grounding: _g, ...plain } = detail;
    expect(parseHostMessage({ type: 'turn', requestId: 1, detail: plain }).ok).toBe(true);
  });
  it('rejects bad labels, extra keys, non-finite numbers and missing fields with the path', () => {
    const g = detail.grounding!;
    const bad = (x: unknown) => {
      const r = parseHostMessage(msg(x));
      return r.ok ? 'ok' : r.error;
    };
    expect(bad({ ...g, sentences: [{ ...g.sentences[0], label: 'maybe' }] })).toBe('turn: grounding.sentences[0]: bad "label"');
    expect(bad({ ...g, extra: 1 })).toBe('turn: grounding: unexpected "extra"');
    expect(bad({ ...g, knowledgeF1: Number.NaN })).toBe('turn: grounding: bad "knowledgeF1"');
    expect(bad({ ...g, sentences: [{ ...g.sentences[1], lost: { ...g.sentences[1]!.lost, afterCut: [1] } }] })).toBe('turn: grounding.sentences[0].lost: bad "afterCut"');
    const { stale: _s, ...noStale } = g;
    expect(bad(noStale)).toBe('turn: grounding: missing "stale"');
    expect(bad('text')).toBe('turn: grounding: not an object');
  });
});

describe('spillway.grounding.* settings', () => {
  it('passes valid thresholds on and drops invalid ones (the core default applies)', () => {
    const values: Record<string, unknown> = {
      'grounding.supportShare': 0.7,
      'grounding.supportMinWords': 2.5, // not an integer
      'grounding.sentenceMinWords': 4,
      'grounding.duplicateResemblance': 0, // must be > 0
      'grounding.staleAfterDays': 30,
      'grounding.supportKinds': ['passage', 'history', 'passage'],
      'grounding.now': '2026-06-01',
      'grounding.lexicalByFar': 'big',
    };
    expect(readGroundingSettings((k) => values[k])).toEqual({
      enabled: true,
      analysis: { supportShare: 0.7, sentenceMinWords: 4, staleAfterDays: 30, supportKinds: ['passage', 'history'], now: '2026-06-01' },
    });
    expect(readGroundingSettings((k) => ({ 'grounding.enabled': false, 'grounding.supportKinds': ['nonsense'], 'grounding.now': 'yesterday' })[k]))
      .toEqual({ enabled: false, analysis: {} });
  });

  it('reads the grounding checks through spillway.diagnostics.enabled', () => {
    const s = readEditorSettings((k) => (k === 'diagnostics.enabled' ? { stalePassage: false, unsupportedSentence: 'no' } : undefined));
    expect(s.checks.stalePassage).toBe(false);
    expect(s.checks.unsupportedSentence).toBe(true);
    expect(s.grounding).toEqual({ enabled: true, analysis: {} });
    // stalePassage starts off (it would mark nearly every passage of an old knowledge base); the rest on.
    const d = readEditorSettings(() => undefined).checks;
    expect([d.stalePassage, d.unsupportedSentence, d.evidenceLostToBudget, d.lexicalMismatch, d.nearDuplicates, d.middlePosition]).toEqual([false, true, true, true, true, true]);
    expect(readEditorSettings((k) => (k === 'diagnostics.enabled' ? { stalePassage: true } : undefined)).checks.stalePassage).toBe(true);
  });
});
