/**
 * The heavy half of the extension: the core's reader, validator, ledger, importers and tokenizer.
 * Bundled separately (dist/engine.js) and required on first need, so activation never parses it:
 * the tokenizer's rank tables and the schema validator load only when a log is opened.
 */
export { Accountant } from '../core/tokens/accountant';
export { tokenBoundaries } from '../core/tokens/cut';
export { ENCODINGS, encodingForModel, isEncodingName } from '../core/tokens/encoder';
export { auditRecord, resolveEncoding } from '../core/audit/ledger';
export { AuditCancelled, auditItems } from '../core/audit/audit';
export { renderHtmlReport, PRIVACY_NOTICE } from '../core/audit/html';
export { parseRecordLine, readLog, readLogText } from '../core/log/reader';
export { convertText } from '../core/import/index';
export { detectFormat } from '../core/import/detect';
// Reply grounding (core/view/grounding.ts reads its results; `words` decides what lies after a cut).
export { analyseTurn, loadShingleHasher, words } from '../core/analysis/index';
// Re-pack, compare and sweep (extension/host/repack.ts).
export { readLogForRepack, repackLines, RepackCancelled, ComparisonTotalsBuilder, sweep, SweepCancelled, parsePrices } from '../core/repack/index';
export { parsePlan, PlanError } from '../core/pack/plans';
export { PLAN_CHOICES } from '../core/pack/plans/index';
