/**
 * JSON Schema (draft-07, as ajv compiles by default) of the analysis output, so the audit's
 * `spillway.audit/1` schema can embed it: per record `analysis` = TURN_ANALYSIS_SCHEMA, top level
 * `analysisSummary` = ANALYSIS_SUMMARY_SCHEMA. Kept beside `types.ts`; a test checks real output
 * against it, so a field added to one and not the other fails.
 */

const num = { type: 'number' } as const;
const int = { type: 'integer', minimum: 0 } as const;
const share = { type: 'number', minimum: 0, maximum: 1 } as const;
const str = { type: 'string' } as const;
const nullable = (schema: object): object => ({ anyOf: [schema, { type: 'null' }] });
const fate = { enum: ['kept', 'clipped', 'dropped'] } as const;
const kind = { enum: ['instructions', 'history', 'query', 'passage', 'tool'] } as const;
const strict = (properties: Record<string, object>): object => ({
  type: 'object',
  additionalProperties: false,
  required: Object.keys(properties),
  properties,
});
const labels = ['supported', 'unsupported', 'lost', 'skipped'] as const;
const labelCounts = strict(Object.fromEntries(labels.map((l) => [l, int])));

const partMatch = strict({
  id: str,
  kind,
  part: { enum: ['kept', 'spilled'] },
  share,
  overlap: { type: 'array', items: str },
});

export const TURN_ANALYSIS_SCHEMA = strict({
  conversation: str,
  turn: num,
  hasReply: { type: 'boolean' },
  sentences: {
    type: 'array',
    items: strict({
      index: int,
      start: int,
      end: int,
      text: str,
      label: { enum: labels },
      contentWords: int,
      kept: nullable(partMatch),
      spilled: nullable(partMatch),
    }),
  },
  counts: labelCounts,
  knowledgeF1: nullable(share),
  knowledgeF1Basis: { enum: ['evidence', 'best-passage', null] },
  passages: {
    type: 'array',
    items: strict({
      id: str,
      rank: nullable(num),
      fate,
      keptTokens: int,
      position: nullable(int),
      f1: share,
      keptF1: share,
      bm25Query: nullable(num),
      bm25QueryRank: nullable(int),
      bm25Reply: nullable(num),
      supports: int,
      lostSupports: int,
      date: nullable(str),
      ageDays: nullable(num),
      stale: { type: 'boolean' },
    }),
  },
  evidence: nullable(
    strict({
      ids: { type: 'array', items: str },
      missing: { type: 'array', items: str },
      cut: { type: 'array', items: strict({ id: str, fate }) },
      f1: nullable(share),
    }),
  ),
  lexical: nullable(
    strict({
      tau: nullable({ type: 'number', minimum: -1, maximum: 1 }),
      n: int,
      best: nullable(str),
      bestRank: nullable(num),
      ratio: nullable(num),
      flagged: { type: 'boolean' },
    }),
  ),
  duplicates: strict({
    method: { enum: ['exact', 'minhash'] },
    w: int,
    shingles: int,
    pairs: {
      type: 'array',
      items: strict({ a: str, b: str, resemblance: share, containmentAB: share, containmentBA: share, wastedTokens: int }),
    },
    wastedTokens: int,
  }),
  position: strict({
    best: nullable(str),
    position: nullable(int),
    of: int,
    third: { enum: ['first', 'middle', 'last', null] },
    tokensBefore: nullable(int),
    long: { type: 'boolean' },
    flagged: { type: 'boolean' },
  }),
  staleness: strict({
    now: nullable(str),
    staleAfterDays: num,
    stale: { type: 'array', items: str },
    staleTokens: int,
  }),
  flags: {
    type: 'array',
    items: { enum: ['unsupported-sentences', 'evidence-lost', 'evidence-cut', 'lexical-mismatch', 'near-duplicates', 'middle-position', 'stale-passages'] },
  },
  notes: { type: 'array', items: str },
});

export const ANALYSIS_SUMMARY_SCHEMA = strict({
  turns: int,
  turnsWithReply: int,
  sentences: labelCounts,
  turnsWithUnsupported: int,
  shareWithUnsupported: nullable(share),
  turnsWithLostEvidence: int,
  shareWithLostEvidence: nullable(share),
  turnsWithEvidenceCut: int,
  duplicatePairs: int,
  duplicateWasteTokens: int,
  stalePassages: int,
  staleTokens: int,
  meanKnowledgeF1: nullable(share),
  knowledgeF1Turns: int,
  meanEvidenceF1: nullable(share),
  evidenceTurns: int,
  meanKendallTau: nullable({ type: 'number', minimum: -1, maximum: 1 }),
  lexicalMismatchTurns: int,
  middlePositionTurns: int,
});
