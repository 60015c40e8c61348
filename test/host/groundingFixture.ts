/**
 * A hand-made record line, ledger and TurnAnalysis for the grounding view tests. Every offset and
 * column is counted by hand in the comments; nothing here comes from the code under test.
 */
import type { TurnAnalysis } from '../../extension/core/analysis/types';
import type { AuditedRecord } from '../../extension/core/view/audited';
import { audited, seg } from './ledgerFixture';

// Decoded reply: "Night buses run hourly.\nSeniors ride free with a \"pass\". Trams fly to the moon."
//   sentence 0 "Night buses run hourly."            decoded [0, 23)
//   decoded 23 is the newline
//   sentence 1 'Seniors ride free with a "pass".'  decoded [24, 56)  (24 + 32 characters)
//   sentence 2 "Trams fly to the moon."             decoded [57, 79)  (57 + 22 characters)
export const REPLY_RAW = String.raw`Night buses run hourly.\nSeniors ride free with a \"pass\". Trams fly to the moon.`;
// p2's text is clipped at character 44, right after "Pets travel in carriers.":
//   "Seniors:"(8) " see"(12) " below."(19) " Pets"(24) " travel"(31) " in"(34) " carriers."(44)
export const P2_TEXT = 'Seniors: see below. Pets travel in carriers. Seniors ride free with a pass.';
export const LINE =
  '{"v":1,"conversation":"c-1","turn":1,"model":{"name":"gpt-4o","window":8192,"reserve":1024},' +
  '"segments":[{"id":"p1","kind":"passage","role":"user","rank":1,"text":"Night buses run hourly.","date":"2020-01-01"},' +
  `{"id":"p2","kind":"passage","role":"user","rank":2,"text":"${P2_TEXT}"}],` +
  `"reply":"${REPLY_RAW}"}`;
/** Column of the reply literal's opening quote (located by plain string search). */
export const R = LINE.indexOf('"reply":') + 8;

export function analysis(p: Partial<TurnAnalysis> = {}): TurnAnalysis {
  return {
    conversation: 'c-1',
    turn: 1,
    hasReply: true,
    sentences: [
      {
        index: 0, start: 0, end: 23, text: 'Night buses run hourly.', label: 'supported', contentWords: 4,
        kept: { id: 'p1', kind: 'passage', part: 'kept', share: 1, overlap: ['night', 'buses', 'run', 'hourly'] },
        spilled: null,
      },
      {
        index: 1, start: 24, end: 56, text: 'Seniors ride free with a "pass".', label: 'lost', contentWords: 4,
        kept: { id: 'p2', kind: 'passage', part: 'kept', share: 0.25, overlap: ['seniors'] },
        spilled: { id: 'p2', kind: 'passage', part: 'spilled', share: 1, overlap: ['seniors', 'ride', 'free', 'pass'] },
      },
      { index: 2, start: 57, end: 79, text: 'Trams fly to the moon.', label: 'unsupported', contentWords: 3, kept: null, spilled: null },
    ],
    counts: { supported: 1, unsupported: 1, lost: 1, skipped: 0 },
    knowledgeF1: 0.5,
    knowledgeF1Basis: 'best-passage',
    passages: [
      { id: 'p1', rank: 1, fate: 'kept', keptTokens: 5, position: 1, f1: 0.5, keptF1: 0.5, bm25Query: 1.25, bm25QueryRank: 2, bm25Reply: 3, supports: 1, lostSupports: 0, date: '2020-01-01', ageDays: 2525.4, stale: true },
      { id: 'p2', rank: 2, fate: 'clipped', keptTokens: 9, position: 2, f1: 0.4, keptF1: 0.1, bm25Query: 3.5, bm25QueryRank: 1, bm25Reply: 2, supports: 0, lostSupports: 1, date: null, ageDays: null, stale: false },
    ],
    evidence: null,
    lexical: { tau: -1, n: 2, best: 'p2', bestRank: 2, ratio: 2.8, flagged: true },
    duplicates: { method: 'exact', w: 3, shingles: 20, pairs: [{ a: 'p1', b: 'p2', resemblance: 0.6, containmentAB: 0.9, containmentBA: 0.3, wastedTokens: 9 }], wastedTokens: 9 },
    position: { best: 'p1', position: 3, of: 5, third: 'middle', tokensBefore: 40, long: true, flagged: true },
    staleness: { now: '2026-12-01T00:00:00Z', staleAfterDays: 365, stale: ['p1'], staleTokens: 5 },
    flags: ['unsupported-sentences', 'evidence-lost', 'lexical-mismatch', 'near-duplicates', 'middle-position', 'stale-passages'],
    notes: [],
    ...p,
  };
}

export function groundedRecord(a: TurnAnalysis = analysis()): AuditedRecord {
  const rec = audited(
    4,
    {
      segments: [
        seg({ id: 'p1', kind: 'passage', rank: 1, fate: 'kept', tokens: 5, keptTokens: 5 }),
        seg({ id: 'p2', kind: 'passage', rank: 2, fate: 'clipped', tokens: 16, keptTokens: 9, cut: { token: 9, char: 44 } }),
      ],
      analysis: a,
    },
    {
      segments: [
        { id: 'p1', kind: 'passage', role: 'user', rank: 1, text: 'Night buses run hourly.', date: '2020-01-01' },
        { id: 'p2', kind: 'passage', role: 'user', rank: 2, text: P2_TEXT },
      ],
      reply: JSON.parse(`"${REPLY_RAW}"`) as string,
    },
  );
  return rec;
}
