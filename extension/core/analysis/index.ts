/** Grounding and passage diagnostics: the public surface for the audit, the host and the CLI. */
export { analyseTurn, summariseAnalyses, DEFAULT_ANALYSIS_SETTINGS } from './analyse';
export { bm25Scores, bm25Scorer, kendallTauB, BM25_PARAMS } from './bm25';
export { TURN_ANALYSIS_SCHEMA, ANALYSIS_SUMMARY_SCHEMA } from './schema';
export { f1Score } from './f1';
export { normalizeAnswer, squadTokens, words, contentWords } from './normalize';
export { resemblance, containment, nearDuplicates, loadShingleHasher, shingleHasherReady } from './shingles';
export { splitSentences } from './sentences';
export type * from './types';
