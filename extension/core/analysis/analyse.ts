/**
 * One turn's grounding and passage diagnostics, from a record (the texts) and its ledger (what
 * was sent). Deterministic and offline: no model, no network, no wall clock.
 */
import { JOINER, type Fate, type LogRecord, type Segment } from '../log/types';
import type { Ledger } from '../audit/types';
import { bm25Scorer, kendallTauB, ranksByScore } from './bm25';
import { overlapF1 } from './f1';
import { positionCheck } from './position';
import { sentenceSupport, type SupportPart } from './sentences';
import { nearDuplicates } from './shingles';
import { ageInDays, isStale, parseIsoTime } from './staleness';
import { joinedSquad, plainTexts, sharedTexts, type SquadCounts, type TextSource } from './textfacts';
import type {
  AnalysisSettings,
  AnalysisSummary,
  EvidenceCheck,
  LexicalCheck,
  PassageAnalysis,
  SentenceLabel,
  StalenessCheck,
  TurnAnalysis,
  TurnFlag,
} from './types';

/** Defaults; the reasons for each value are in docs/grounding.md. */
export const DEFAULT_ANALYSIS_SETTINGS: Readonly<AnalysisSettings> = Object.freeze<AnalysisSettings>({
  supportShare: 0.5,
  supportMinWords: 2,
  sentenceMinWords: 3,
  supportKinds: ['passage', 'tool'],
  shingleWords: 3,
  duplicateResemblance: 0.5,
  duplicateContainment: 0.8,
  minhashAboveShingles: 20_000,
  minhashSize: 128,
  lexicalByFar: 2,
  longBlock: 5,
  staleAfterDays: 365,
});

/** A record segment with its ledger entry and its sent / spilled text. */
interface Joined {
  seg: Segment;
  fate: Fate;
  keptTokens: number;
  /** Prompt order (ledger message index, then ledger order). */
  order: number;
  keptText: string;
}

function joinLedger(record: LogRecord, ledger: Ledger, notes: string[]): Joined[] {
  const byId = new Map<string, number[]>();
  ledger.segments.forEach((s, i) => {
    const list = byId.get(s.id);
    if (list) list.push(i);
    else byId.set(s.id, [i]);
  });
  const used = new Set<number>();
  const joined = record.segments.map((seg, i) => {
    // Same position and id: the usual case. Otherwise the first unused ledger entry with that id.
    let at = ledger.segments[i]?.id === seg.id && !used.has(i) ? i : -1;
    if (at < 0) at = byId.get(seg.id)?.find((j) => !used.has(j)) ?? -1;
    const entry = at >= 0 ? ledger.segments[at] : undefined;
    if (!entry) {
      notes.push(`segment "${seg.id}" has no ledger entry; treated as kept`);
      return { seg, fate: 'kept' as Fate, keptTokens: 0, sortKey: [Number.MAX_SAFE_INTEGER, i], keptText: seg.text };
    }
    used.add(at);
    let keptText = seg.text;
    if (entry.fate === 'dropped') keptText = '';
    else if (entry.fate === 'clipped') {
      const char = Math.max(0, Math.min(seg.text.length, entry.cut?.char ?? 0));
      if (!entry.cut) notes.push(`clipped segment "${seg.id}" has no cut point; nothing of it counted as sent`);
      keptText = seg.text.slice(0, char);
    }
    return { seg, fate: entry.fate, keptTokens: entry.keptTokens, sortKey: [entry.message, at], keptText };
  });
  const order = joined
    .map((j, i) => ({ i, key: j.sortKey }))
    .sort((a, b) => a.key[0]! - b.key[0]! || a.key[1]! - b.key[1]!)
    .map((x) => x.i);
  const result: Joined[] = joined.map((j) => ({ seg: j.seg, fate: j.fate, keptTokens: j.keptTokens, order: 0, keptText: j.keptText }));
  order.forEach((recordIndex, promptIndex) => {
    result[recordIndex]!.order = promptIndex;
  });
  return result;
}

const rankOf = (s: Segment): number => (typeof s.rank === 'number' && Number.isFinite(s.rank) ? s.rank : Number.POSITIVE_INFINITY);

function emptyCounts(): Record<SentenceLabel, number> {
  return { supported: 0, unsupported: 0, lost: 0, skipped: 0 };
}

export function analyseTurn(record: LogRecord, ledger: Ledger, settings: Partial<AnalysisSettings> = {}): TurnAnalysis {
  const s: AnalysisSettings = { ...DEFAULT_ANALYSIS_SETTINGS, ...settings };
  const notes: string[] = [];
  // Segment texts recur across records: their word lists, term and token counts and shingles come
  // from a memo shared by support, F1, BM25 and shingles. The reply and the query are one-offs,
  // computed directly so they do not push passages out of the memo.
  const texts: TextSource = sharedTexts;
  const joined = joinLedger(record, ledger, notes);
  const byPrompt = [...joined].sort((a, b) => a.order - b.order);
  // Best first: retriever rank, then prompt order. Ties in the analyses resolve in this order.
  const passages = joined.filter((j) => j.seg.kind === 'passage').sort((a, b) => rankOf(a.seg) - rankOf(b.seg) || a.order - b.order);

  const reply = typeof record.reply === 'string' ? record.reply : '';
  const hasReply = reply.trim() !== '';

  // --- sentence support -------------------------------------------------------------------
  const supportSources = [
    ...(s.supportKinds.includes('passage') ? passages : []),
    ...byPrompt.filter((j) => j.seg.kind !== 'passage' && s.supportKinds.includes(j.seg.kind)),
  ];
  const parts: SupportPart[] = [];
  for (const j of supportSources) {
    if (j.keptText !== '') parts.push({ id: j.seg.id, kind: j.seg.kind, part: 'kept', text: j.keptText });
  }
  for (const j of supportSources) {
    // The spilled side of a clipped segment is scored on its whole text, so a sentence whose words
    // straddle the cut still counts as lost to the budget.
    if (j.fate !== 'kept') parts.push({ id: j.seg.id, kind: j.seg.kind, part: 'spilled', text: j.seg.text });
  }
  const sentences = hasReply ? sentenceSupport(reply, parts, s, undefined, texts) : [];
  const counts = emptyCounts();
  for (const sentence of sentences) counts[sentence.label]++;

  // --- Knowledge F1 -----------------------------------------------------------------------
  const replySquad = plainTexts.squad(reply);
  const f1Of = (t: SquadCounts): number => overlapF1(replySquad.counts, replySquad.length, t.counts, t.length).f1;

  // --- BM25+ ------------------------------------------------------------------------------
  const queryText = joined.filter((j) => j.seg.kind === 'query').map((j) => j.seg.text).join(JOINER);
  const hasQuery = plainTexts.words(queryText).length > 0;
  // Internal ids by index: passage ids from a log are not guaranteed unique.
  const docs = passages.map((j, i) => ({ id: String(i), text: j.seg.text }));
  const scorer = hasQuery || hasReply ? bm25Scorer(docs, texts, plainTexts) : null;
  const queryScores = scorer && hasQuery ? scorer(queryText) : null;
  const replyScores = scorer && hasReply ? scorer(reply) : null;
  const queryScoreList = passages.map((_, i) => queryScores?.get(String(i)) ?? 0);
  const queryRanks = ranksByScore(queryScoreList);

  // --- staleness --------------------------------------------------------------------------
  const now = s.now ?? (typeof record.time === 'string' ? record.time : null);
  const nowValid = now !== null && parseIsoTime(now) !== null;
  if (now !== null && !nowValid) notes.push(`"now" (${now}) is not an ISO date; staleness not checked`);

  // --- per passage ------------------------------------------------------------------------
  const sent = byPrompt.filter((j) => j.seg.kind === 'passage' && j.fate !== 'dropped');
  const sentPosition = new Map<Joined, number>(sent.map((j, i) => [j, i + 1]));
  // Sentences each passage carries (as best kept match) or lost (as best spilled match), by id.
  const supportsOf = new Map<string, number>();
  const lostOf = new Map<string, number>();
  for (const x of sentences) {
    if (x.label === 'supported' && x.kept) supportsOf.set(x.kept.id, (supportsOf.get(x.kept.id) ?? 0) + 1);
    if (x.label === 'lost' && x.spilled) lostOf.set(x.spilled.id, (lostOf.get(x.spilled.id) ?? 0) + 1);
  }
  const passageRows: PassageAnalysis[] = passages.map((j, i) => {
    const date = typeof j.seg.date === 'string' ? j.seg.date : null;
    const ageDays = date !== null && nowValid ? ageInDays(date, now!) : null;
    if (date !== null && nowValid && ageDays === null) notes.push(`passage "${j.seg.id}" has a date that is not ISO 8601: ${JSON.stringify(date)}`);
    return {
      id: j.seg.id,
      rank: Number.isFinite(rankOf(j.seg)) ? rankOf(j.seg) : null,
      fate: j.fate,
      keptTokens: j.keptTokens,
      position: sentPosition.get(j) ?? null,
      f1: hasReply ? f1Of(texts.squad(j.seg.text)) : 0,
      // A clipped prefix is a one-off text: computed without the memo.
      keptF1: hasReply && j.keptText !== '' ? f1Of((j.fate === 'kept' ? texts : plainTexts).squad(j.keptText)) : 0,
      bm25Query: queryScores ? queryScoreList[i]! : null,
      bm25QueryRank: queryScores ? queryRanks[i]! : null,
      bm25Reply: replyScores ? replyScores.get(String(i))! : null,
      supports: supportsOf.get(j.seg.id) ?? 0,
      lostSupports: lostOf.get(j.seg.id) ?? 0,
      date,
      ageDays,
      stale: isStale(ageDays, s.staleAfterDays),
    };
  });

  // --- evidence ---------------------------------------------------------------------------
  let evidence: EvidenceCheck | null = null;
  if (Array.isArray(record.evidence) && record.evidence.length > 0) {
    const ids = [...new Set(record.evidence.filter((x): x is string => typeof x === 'string'))];
    const found = ids.map((id) => passages.find((j) => j.seg.id === id));
    const present = found.filter((j): j is Joined => j !== undefined);
    evidence = {
      ids,
      missing: ids.filter((_, i) => found[i] === undefined),
      cut: present.filter((j) => j.fate !== 'kept').map((j) => ({ id: j.seg.id, fate: j.fate })),
      // The evidence passages joined with spaces, from each passage's memoised counts.
      f1: hasReply && present.length > 0 ? f1Of(joinedSquad(present.map((j) => texts.squad(j.seg.text)))) : null,
    };
    if (evidence.missing.length > 0) notes.push(`evidence names no passage of this record: ${evidence.missing.join(', ')}`);
  }
  let knowledgeF1: number | null = null;
  let knowledgeF1Basis: TurnAnalysis['knowledgeF1Basis'] = null;
  if (evidence?.f1 != null) {
    knowledgeF1 = evidence.f1;
    knowledgeF1Basis = 'evidence';
  } else if (hasReply && passageRows.length > 0) {
    knowledgeF1 = passageRows.reduce((best, p) => Math.max(best, p.f1), 0);
    knowledgeF1Basis = 'best-passage';
  }

  // --- lexical relevance ------------------------------------------------------------------
  let lexical: LexicalCheck | null = null;
  if (queryScores) {
    const ranked = passages.map((j, i) => ({ j, i })).filter(({ j }) => Number.isFinite(rankOf(j.seg)));
    const tau = kendallTauB(
      ranked.map(({ j }) => rankOf(j.seg)),
      ranked.map(({ i }) => -queryScoreList[i]!),
    );
    const sorted = [...queryScoreList].sort((a, b) => b - a);
    const top = sorted[0] ?? 0;
    const runnerUp = sorted[1] ?? 0;
    const bestIndex = top > 0 && top !== runnerUp ? queryScoreList.indexOf(top) : -1;
    const bestJoined = bestIndex >= 0 ? passages[bestIndex]! : null;
    const ratio = bestJoined && runnerUp > 0 ? top / runnerUp : null;
    // Low-ranked: in the lower half of the ranked passages (by position in rank order).
    const rankPosition = bestJoined ? ranked.findIndex(({ j }) => j === bestJoined) + 1 : 0;
    const lowRanked = rankPosition > 0 && ranked.length >= 2 && rankPosition > ranked.length / 2;
    const byFar = bestJoined !== null && (runnerUp === 0 || top >= s.lexicalByFar * runnerUp);
    lexical = {
      tau,
      n: ranked.length,
      best: bestJoined?.seg.id ?? null,
      bestRank: bestJoined && Number.isFinite(rankOf(bestJoined.seg)) ? rankOf(bestJoined.seg) : null,
      ratio,
      flagged: lowRanked && byFar,
    };
  }

  // --- near-duplicates --------------------------------------------------------------------
  const duplicates = nearDuplicates(
    passages.map((j) => ({ id: j.seg.id, text: j.seg.text, keptTokens: j.keptTokens })),
    s,
    notes,
    texts,
  );

  // --- position ---------------------------------------------------------------------------
  // The passage carrying the reply: most supported sentences (ties: higher keptF1, then best
  // rank); failing that the first reviewer-marked evidence passage that was sent.
  let best: string | null = null;
  let bestKey: [number, number] = [0, -1];
  passages.forEach((j, i) => {
    const row = passageRows[i]!;
    if (j.fate === 'dropped' || row.supports === 0) return;
    if (row.supports > bestKey[0] || (row.supports === bestKey[0] && row.keptF1 > bestKey[1])) {
      best = j.seg.id;
      bestKey = [row.supports, row.keptF1];
    }
  });
  if (best === null && evidence) best = evidence.ids.find((id) => sent.some((j) => j.seg.id === id)) ?? null;
  const tokensBefore: number[] = [];
  let running = 0;
  for (const j of byPrompt) {
    if (j.seg.kind === 'passage' && j.fate !== 'dropped') tokensBefore.push(running);
    running += j.keptTokens;
  }
  const position = positionCheck(
    best,
    sent.map((j) => ({ id: j.seg.id, keptTokens: j.keptTokens })),
    tokensBefore,
    s.longBlock,
  );

  // --- staleness summary ------------------------------------------------------------------
  const staleRows = passageRows.filter((p) => p.stale);
  const staleness: StalenessCheck = {
    now,
    staleAfterDays: s.staleAfterDays,
    stale: staleRows.map((p) => p.id),
    staleTokens: staleRows.reduce((sum, p) => sum + p.keptTokens, 0),
  };

  const flags: TurnFlag[] = [];
  if (counts.unsupported > 0) flags.push('unsupported-sentences');
  if (counts.lost > 0) flags.push('evidence-lost');
  if (evidence && evidence.cut.length > 0) flags.push('evidence-cut');
  if (lexical?.flagged) flags.push('lexical-mismatch');
  if (duplicates.pairs.length > 0) flags.push('near-duplicates');
  if (position.flagged) flags.push('middle-position');
  if (staleness.stale.length > 0) flags.push('stale-passages');

  return {
    conversation: record.conversation,
    turn: record.turn,
    hasReply,
    sentences,
    counts,
    knowledgeF1,
    knowledgeF1Basis,
    passages: passageRows,
    evidence,
    lexical,
    duplicates,
    position,
    staleness,
    flags,
    notes,
  };
}

const mean = (xs: readonly number[]): number | null => (xs.length === 0 ? null : xs.reduce((a, b) => a + b, 0) / xs.length);

/** Log-level figures, so two logs or two packings of one log can be compared. */
export function summariseAnalyses(items: Iterable<TurnAnalysis>): AnalysisSummary {
  const sentences = emptyCounts();
  let turns = 0;
  let turnsWithReply = 0;
  let turnsWithUnsupported = 0;
  let turnsWithLostEvidence = 0;
  let turnsWithEvidenceCut = 0;
  let duplicatePairs = 0;
  let duplicateWasteTokens = 0;
  let stalePassages = 0;
  let staleTokens = 0;
  let lexicalMismatchTurns = 0;
  let middlePositionTurns = 0;
  const knowledge: number[] = [];
  const evidenceF1: number[] = [];
  const taus: number[] = [];
  for (const a of items) {
    turns++;
    if (a.hasReply) turnsWithReply++;
    for (const label of Object.keys(sentences) as SentenceLabel[]) sentences[label] += a.counts[label];
    if (a.counts.unsupported > 0) turnsWithUnsupported++;
    if (a.counts.lost > 0) turnsWithLostEvidence++;
    if (a.evidence && a.evidence.cut.length > 0) turnsWithEvidenceCut++;
    duplicatePairs += a.duplicates.pairs.length;
    duplicateWasteTokens += a.duplicates.wastedTokens;
    stalePassages += a.staleness.stale.length;
    staleTokens += a.staleness.staleTokens;
    if (a.lexical?.flagged) lexicalMismatchTurns++;
    if (a.position.flagged) middlePositionTurns++;
    if (a.knowledgeF1 !== null) knowledge.push(a.knowledgeF1);
    if (a.evidence?.f1 != null) evidenceF1.push(a.evidence.f1);
    if (a.lexical?.tau != null) taus.push(a.lexical.tau);
  }
  return {
    turns,
    turnsWithReply,
    sentences,
    turnsWithUnsupported,
    shareWithUnsupported: turnsWithReply === 0 ? null : turnsWithUnsupported / turnsWithReply,
    turnsWithLostEvidence,
    shareWithLostEvidence: turnsWithReply === 0 ? null : turnsWithLostEvidence / turnsWithReply,
    turnsWithEvidenceCut,
    duplicatePairs,
    duplicateWasteTokens,
    stalePassages,
    staleTokens,
    meanKnowledgeF1: mean(knowledge),
    knowledgeF1Turns: knowledge.length,
    meanEvidenceF1: mean(evidenceF1),
    evidenceTurns: evidenceF1.length,
    meanKendallTau: mean(taus),
    lexicalMismatchTurns,
    middlePositionTurns,
  };
}
