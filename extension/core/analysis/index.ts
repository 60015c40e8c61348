/** Grounding and passage diagnostics: the public surface for the audit, the host and the CLI. */
export { analyseTurn, summariseAnalyses, DEFAULT_ANALYSIS_SETTINGS } from './analyse';
export { bm25Scores, kendallTauB, BM25_PARAMS } from './bm25';
export { f1Score } from './f1';
export { normalizeAnswer, squadTokens, words, contentWords } from './normalize';
export { resemblance, containment, nearDuplicates, loadShingleHasher, shingleHasherReady } from './shingles';
export { splitSentences } from './sentences';
export type * from './types';
