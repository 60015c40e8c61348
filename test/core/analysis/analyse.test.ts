import Ajv from 'ajv';
import { countTokens } from 'gpt-tokenizer/encoding/cl100k_base';
import { describe, expect, it } from 'vitest';
import { analyseTurn, DEFAULT_ANALYSIS_SETTINGS, summariseAnalyses } from '../../../extension/core/analysis/analyse';
import { ANALYSIS_SUMMARY_SCHEMA, TURN_ANALYSIS_SCHEMA } from '../../../extension/core/analysis/schema';
import { sharedTexts } from '../../../extension/core/analysis/textfacts';
import { instructions, makeTurn, P1, P4, passage, query, referenceTurn } from '../../fixtures/analysis/turns';

describe('analyseTurn on the reference turn (see test/fixtures/analysis/turns.ts)', () => {
  const { record, ledger } = referenceTurn();
  const a = analyseTurn(record, ledger);

  it('labels the reply sentences as a reader would', () => {
    expect(a.sentences.map((s) => [s.label, s.kept?.id ?? s.spilled?.id ?? null])).toEqual([
      ['supported', 'p1'],
      ['lost', 'p2'], // only p2's clipped second sentence talks about seniors
      ['unsupported', null], // bikes and trams: no passage
      ['skipped', null], // "Hope this helps!"
    ]);
    expect(a.counts).toEqual({ supported: 1, unsupported: 1, lost: 1, skipped: 1 });
    expect(a.passages.find((p) => p.id === 'p2')).toMatchObject({ fate: 'clipped', supports: 0, lostSupports: 1 });
  });

  it('raises the expected flags', () => {
    expect(a.flags).toEqual(['unsupported-sentences', 'evidence-lost', 'evidence-cut', 'near-duplicates', 'stale-passages']);
    expect(a.evidence).toMatchObject({ ids: ['p1', 'p2'], missing: [], cut: [{ id: 'p2', fate: 'clipped' }] });
    expect(a.knowledgeF1Basis).toBe('evidence');
    expect(a.knowledgeF1).toBe(a.evidence!.f1);
  });

  it('counts the repeated passage p4 as waste: its sent tokens from the real encoder', () => {
    // p4 repeats p1 (only the final "!" differs): resemblance 1; p4 ranks lower, both were sent.
    expect(a.duplicates.pairs).toEqual([{ a: 'p1', b: 'p4', resemblance: 1, containmentAB: 1, containmentBA: 1, wastedTokens: countTokens(P4) }]);
    expect(a.duplicates.wastedTokens).toBe(countTokens(P4));
  });

  it('positions: p1 carries the reply and is first of the three sent passages', () => {
    expect(a.passages.map((p) => [p.id, p.position])).toEqual([
      ['p1', 1],
      ['p2', 2],
      ['p3', null],
      ['p4', 3],
    ]);
    expect(a.position).toMatchObject({ best: 'p1', position: 1, of: 3, third: 'first', long: false, flagged: false });
  });

  it('staleness from the record time: p3 (2023-01-10) is older than 365 days at 2026-11-30', () => {
    expect(a.staleness).toEqual({ now: '2026-11-30T10:00:00Z', staleAfterDays: 365, stale: ['p3'], staleTokens: 0 });
    // 2023-01-10 → 2026-11-30T10:00Z: 1420 days and 10 hours
    expect(a.passages.find((p) => p.id === 'p3')!.ageDays).toBeCloseTo(1420 + 10 / 24, 9);
    const later = analyseTurn(record, ledger, { now: '2023-06-01' });
    expect(later.staleness.stale).toEqual([]);
  });

  it('is plain JSON', () => {
    expect(JSON.parse(JSON.stringify(a))).toEqual(a);
  });
});

describe('Knowledge F1 (Shuster et al. 2021) via SQuAD F1, hand-worked', () => {
  const segments = [query('How much is a day pass?'), passage('e1', 1, 'A day pass costs 5 dollars.'), passage('e2', 2, 'Night buses stop at midnight.')];
  const reply = 'Day passes cost 5 dollars.';

  it('against one evidence passage', () => {
    // reply [day, passes, cost, 5, dollars]; e1 [day, pass, costs, 5, dollars]; common 3 → P = R = 3/5 → F1 = 0.6
    const { record, ledger } = makeTurn({ segments, reply, evidence: ['e1'] });
    const a = analyseTurn(record, ledger);
    expect(a.evidence!.f1).toBeCloseTo(0.6, 12);
    expect(a.knowledgeF1).toBeCloseTo(0.6, 12);
    expect(a.passages.map((p) => p.f1)).toEqual([expect.closeTo(0.6, 12), 0]);
  });
  it('against two evidence passages joined', () => {
    // gold = e1 + e2 = [day, pass, costs, 5, dollars, night, buses, stop, at, midnight] (10 tokens)
    // common 3 → P = 3/5, R = 3/10 → F1 = 2·0.6·0.3/0.9 = 0.4
    const { record, ledger } = makeTurn({ segments, reply, evidence: ['e1', 'e2', 'nope'] });
    const a = analyseTurn(record, ledger);
    expect(a.evidence!.f1).toBeCloseTo(0.4, 12);
    expect(a.evidence!.missing).toEqual(['nope']);
    expect(a.notes.some((n) => n.includes('nope'))).toBe(true);
  });
  it('without evidence: the best passage', () => {
    const { record, ledger } = makeTurn({ segments, reply });
    const a = analyseTurn(record, ledger);
    expect(a.knowledgeF1Basis).toBe('best-passage');
    expect(a.knowledgeF1).toBeCloseTo(0.6, 12);
  });
});

describe('lexical relevance: a low-ranked passage that is by far the best match', () => {
  const { record, ledger } = makeTurn({
    segments: [
      query('Where can I charge my phone on the ferry?'),
      passage('r1', 1, 'Bus timetables change on public holidays.'),
      passage('r2', 2, 'Tram stops have shelters and maps.'),
      passage('r3', 3, 'Fares are capped at ten dollars a day.'),
      passage('r4', 4, 'Parking at stations is free on weekends.'),
      passage('r5', 5, 'Ferry decks have phone charging points near the cafe; charge your phone at any seat.'),
    ],
    reply: 'You can charge your phone on the ferry decks.',
  });
  const a = analyseTurn(record, ledger);

  it('flags r5 (rank 5 of 5) as the best lexical match by a wide margin', () => {
    // r5 holds charge, phone (×2), ferry, the; r1 and r4 only "on"; r2 and r3 nothing.
    expect(a.lexical).toMatchObject({ best: 'r5', bestRank: 5, n: 5, flagged: true });
    expect(a.lexical!.ratio).toBeGreaterThan(DEFAULT_ANALYSIS_SETTINGS.lexicalByFar);
    expect(a.flags).toContain('lexical-mismatch');
  });
  it("Kendall's tau-b between retriever rank and BM25+, by hand", () => {
    // BM25+ order: r5 > r1 > r4 > r2 = r3 (r1 and r4 match "on" once; r1 is shorter, so scores higher).
    // Retriever pairs (i<j), C if i scores higher: (1,2) C (1,3) C (1,4) C (1,5) D (2,3) tie
    // (2,4) D (2,5) D (3,4) D (3,5) D (4,5) D → C = 3, D = 6, n0 = 10, ties in BM25 = 1
    // tau_b = (3 − 6)/sqrt(10·9) = −3/sqrt(90)
    expect(a.passages.map((p) => p.bm25QueryRank)).toEqual([2, 4, 4, 3, 1]);
    expect(a.lexical!.tau).toBeCloseTo(-3 / Math.sqrt(90), 12);
  });
});

describe('position risk (Liu et al., TACL 2024)', () => {
  const topics = [
    'Bicycles may ride on trams outside rush hours.',
    'The airport shuttle leaves every 20 minutes.',
    'Wheelchair ramps are fitted on every harbour ferry.',
    'Lost property is kept for 30 days.',
    'Monthly passes cost 62 dollars.',
    'Night buses run until 5 am.',
  ];
  const sys = instructions('You are the rider-help assistant.');
  const q = query('Can I take my wheelchair on the ferry?');
  const { record, ledger } = makeTurn({
    segments: [sys, q, ...topics.map((t, i) => passage(`m${i + 1}`, i + 1, t))],
    reply: 'Wheelchair ramps are fitted on every harbour ferry.',
  });
  const a = analyseTurn(record, ledger);

  it('flags evidence at position 3 of 6 sent passages (middle third: positions 3–4)', () => {
    expect(a.position).toEqual({
      best: 'm3',
      position: 3,
      of: 6,
      third: 'middle',
      // segment tokens sent before m3: instructions + query + m1 + m2 (framing excluded), real encoder
      tokensBefore: countTokens(sys.text) + countTokens(q.text) + countTokens(topics[0]!) + countTokens(topics[1]!),
      long: true,
      flagged: true,
    });
    expect(a.flags).toContain('middle-position');
  });
  it('a shorter block is not "long" under a stricter setting', () => {
    expect(analyseTurn(record, ledger, { longBlock: 7 }).position.flagged).toBe(false);
  });
});

describe('robustness', () => {
  it('a record segment missing from the ledger is noted and treated as kept', () => {
    const { record, ledger } = referenceTurn();
    ledger.segments = ledger.segments.filter((s) => s.id !== 'p4');
    const a = analyseTurn(record, ledger);
    expect(a.notes).toContain('segment "p4" has no ledger entry; treated as kept');
    expect(a.passages.find((p) => p.id === 'p4')!.fate).toBe('kept');
  });
  it('joins the ledger by id when its order differs from the record, and duplicate ids one-to-one', () => {
    const { record, ledger } = makeTurn({
      segments: [query('Night buses?'), passage('dup', 1, P1), passage('dup', 2, 'Monthly passes cost 62 dollars.')],
      fates: { dup: 'kept' },
      reply: 'Night buses N1 and N2 run every 30 minutes from Central Station.',
    });
    // Mark the second "dup" dropped, then reverse the ledger: the join must not reuse an entry.
    ledger.segments[2] = { ...ledger.segments[2]!, fate: 'dropped', keptTokens: 0 };
    ledger.segments.reverse();
    const a = analyseTurn(record, ledger);
    expect(a.notes).toEqual([]);
    expect(a.passages.map((p) => [p.rank, p.fate])).toEqual([
      [1, 'kept'],
      [2, 'dropped'],
    ]);
    expect(a.sentences[0]!.label).toBe('supported');
  });
  it('an invalid "now" is noted and staleness is not checked', () => {
    const { record, ledger } = referenceTurn();
    const a = analyseTurn(record, ledger, { now: 'tomorrow' });
    expect(a.notes).toContain('"now" (tomorrow) is not an ISO date; staleness not checked');
    expect(a.staleness.stale).toEqual([]);
  });
  it('no reply: no sentences, no F1, nothing flagged for support', () => {
    const { record, ledger } = makeTurn({ segments: [query('Hi'), passage('p1', 1, P1)] });
    const a = analyseTurn(record, ledger);
    expect(a).toMatchObject({ hasReply: false, sentences: [], knowledgeF1: null, knowledgeF1Basis: null });
    expect(a.passages[0]!.bm25Reply).toBeNull();
  });
  it('a date that is not ISO is reported, not guessed', () => {
    const { record, ledger } = makeTurn({ segments: [passage('p1', 1, P1, { date: 'last spring' })], reply: 'x', time: '2026-01-01' });
    expect(analyseTurn(record, ledger).notes).toContain('passage "p1" has a date that is not ISO 8601: "last spring"');
  });
});

describe('the text memo shared across records does not change any analysis', () => {
  it('a turn gives the same analysis cold and after turns that reuse its passages differently', () => {
    const { record, ledger } = referenceTurn();
    const segments = record.segments;
    sharedTexts.memo.clear();
    const cold = analyseTurn(record, ledger);
    // The same passages in another order, other fates and another reply, then the reference again.
    const other = makeTurn({
      segments: [...segments].reverse(),
      fates: { p1: { clipAt: 10 }, p3: 'kept', p4: 'dropped' },
      reply: 'Seniors ride free. Bikes go on trams.',
    });
    const otherCold = analyseTurn(other.record, other.ledger);
    const warm = analyseTurn(record, ledger);
    expect(warm).toEqual(cold);
    sharedTexts.memo.clear();
    expect(analyseTurn(other.record, other.ledger)).toEqual(otherCold);
  });
});

describe('summariseAnalyses', () => {
  it('adds up the turns', () => {
    const ref = referenceTurn();
    const evidenceTurn = makeTurn({
      segments: [query('How much is a day pass?'), passage('e1', 1, 'A day pass costs 5 dollars.')],
      reply: 'Day passes cost 5 dollars.',
      evidence: ['e1'],
    });
    const noReply = makeTurn({ segments: [query('Hi'), passage('p1', 1, P1)] });
    const items = [ref, evidenceTurn, noReply].map(({ record, ledger }) => analyseTurn(record, ledger));
    const s = summariseAnalyses(items);
    // ref: 1 supported, 1 unsupported, 1 lost, 1 skipped. evidenceTurn: "Day passes cost 5 dollars."
    // has 5 content words (day, passes, cost, 5, dollars); e1 holds day, 5, dollars → 3/5 ≥ 0.5 → supported.
    expect(items[1]!.sentences.map((x) => [x.label, x.kept?.share])).toEqual([['supported', 0.6]]);
    expect(s.turns).toBe(3);
    expect(s.turnsWithReply).toBe(2);
    expect(s.sentences).toEqual({ supported: 2, unsupported: 1, lost: 1, skipped: 1 });
    expect(s.turnsWithUnsupported).toBe(1);
    expect(s.shareWithUnsupported).toBe(0.5);
    expect(s.turnsWithLostEvidence).toBe(1);
    expect(s.shareWithLostEvidence).toBe(0.5);
    expect(s.turnsWithEvidenceCut).toBe(1);
    expect(s.duplicatePairs).toBe(1);
    expect(s.duplicateWasteTokens).toBe(countTokens(P4));
    expect(s.stalePassages).toBe(1);
    expect(s.knowledgeF1Turns).toBe(2);
    expect(s.meanKnowledgeF1).toBeCloseTo((items[0]!.knowledgeF1! + 0.6) / 2, 12);
    expect(s.evidenceTurns).toBe(2);
  });
  it('an empty log has no means', () => {
    expect(summariseAnalyses([])).toMatchObject({ turns: 0, shareWithUnsupported: null, meanKnowledgeF1: null, meanKendallTau: null });
  });
});

describe('JSON Schema of the output (extension/core/analysis/schema.ts)', () => {
  const ajv = new Ajv({ allErrors: true, strict: true });
  const validTurn = ajv.compile(TURN_ANALYSIS_SCHEMA);
  const validSummary = ajv.compile(ANALYSIS_SUMMARY_SCHEMA);
  const { record, ledger } = referenceTurn();
  const a = analyseTurn(record, ledger);

  it('accepts real output and its summary', () => {
    expect(validTurn(a), ajv.errorsText(validTurn.errors)).toBe(true);
    expect(validSummary(summariseAnalyses([a])), ajv.errorsText(validSummary.errors)).toBe(true);
    expect(validSummary(summariseAnalyses([])), ajv.errorsText(validSummary.errors)).toBe(true);
  });
  it('rejects an unknown field, a missing field and a wrong label', () => {
    expect(validTurn({ ...a, extra: 1 })).toBe(false);
    const { notes: _notes, ...withoutNotes } = a;
    expect(validTurn(withoutNotes)).toBe(false);
    expect(validTurn({ ...a, sentences: [{ ...a.sentences[0]!, label: 'maybe' }] })).toBe(false);
  });
});
