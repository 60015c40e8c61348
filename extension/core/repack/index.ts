/** Re-pack, compare, sweep and cost: the public surface for the host, the webview's view models and the CLI. */
export { repackLines, readLogForRepack, RepackCancelled, type RepackItem, type RepackContext } from './repack';
export { repackRecord, type RecordOutcome, type WindowOutcome } from './pack';
export {
  compareLedgers,
  compareLogs,
  worseFirst,
  ComparisonTotalsBuilder,
  CompareCancelled,
  type TurnComparison,
  type PassageChange,
  type EvidenceRetention,
  type ComparisonTotals,
  type LogComparison,
  type CompareOptions,
  type CompareContext,
} from './compare';
export { sweep, SweepCancelled, type SweepCell, type SweepOptions, type SweepResult } from './sweep';
export { evidenceOf, replySupport } from './evidence';
export { CostAccumulator, parsePrices, priceFor } from './cost';
export type { RepackOptions, RepackSummary, Prices } from './types';
