/**
 * Re-packing one record: apply a budget / reserve / encoding / packing plan and produce the new
 * record (a copy with only the re-pack's decisions changed) and its exact outcome.
 */
import type { Fate, LogRecord, Segment, SentSegment } from '../log/types';
import type { Accountant } from '../tokens/accountant';
import type { TurnState } from '../audit/types';
import { resolveBudget, resolveEncoding } from '../audit/ledger';
import { framingNumbers } from '../tokens/framing';
import { PromptMeter } from '../pack/meter';
import { parsePlan } from '../pack/plans';
import { isComposedPlan } from '../pack/plans/index';
import type { DropReason } from '../pack/plans/passages';
import type { RepackOptions } from './types';

export interface WindowOutcome {
  passage: string;
  used: number;
  sent: SentSegment[];
}

export interface RecordOutcome {
  /** The re-packed record, ready to be written. */
  record: LogRecord;
  encoding: string;
  window: number;
  reserve: number;
  budget: number;
  plan: string;
  /** Exact tokens spent: the prompt, or for fusion:L the sum over its windows. */
  used: number;
  state: TurnState;
  /** Fate and kept characters per segment, in the new record's segment order. */
  fates: Fate[];
  chars: (number | undefined)[];
  windows?: WindowOutcome[];
}

const fateOf = (text: string, kept: number | undefined): Fate => (kept === undefined ? 'dropped' : kept >= text.length ? 'kept' : 'clipped');

function sentList(segments: readonly Segment[], kept: readonly (number | undefined)[], reasons?: Map<number, DropReason>, order?: readonly number[]): SentSegment[] {
  return segments.map((s, n) => {
    const fate = fateOf(s.text, kept[n]);
    const out: SentSegment = { id: s.id, fate };
    if (fate === 'clipped') out.chars = kept[n]!;
    const why = reasons?.get(order ? order[n]! : n);
    if (fate === 'dropped' && why) out.reason = why;
    return out;
  });
}

/**
 * Packs `record` under `opts` (each option falls back to the record's own value). The encoder must
 * be loaded (`await acct.encoder(resolveEncoding(record, opts))`).
 */
export function repackRecord(record: LogRecord, opts: RepackOptions, acct: Accountant): RecordOutcome {
  const encoding = resolveEncoding(record, opts);
  const { budget, reserve, window } = resolveBudget(record, opts);
  const plan = parsePlan(opts.plan ?? record.plan);
  const order = isComposedPlan(plan) && plan.arrange ? plan.arrange(record.segments) : undefined;
  const segments = order ? order.map((i) => record.segments[i]!) : record.segments;
  const meter = new PromptMeter(segments, framingNumbers(record.framing), acct, encoding, record.conversation);
  const ctx = { record: order ? { ...record, segments } : record, budget, meter };

  let kept: (number | undefined)[];
  let used: number;
  let state: TurnState;
  let windows: WindowOutcome[] | undefined;
  let reasons: Map<number, DropReason> | undefined;
  let fusionWindow = 0;
  if (isComposedPlan(plan) && plan.windows) {
    const packed = plan.windows(ctx);
    const ws = packed.windows;
    fusionWindow = packed.window;
    reasons = packed.result.reasons;
    windows = ws.map((w) => ({ passage: segments[w.passage]!.id, used: w.used, sent: sentList(segments, w.kept).filter((s, i) => s.fate !== 'dropped' || segments[i]!.kind !== 'passage') }));
    // Across windows a segment's fate is the best it had in any window.
    kept = segments.map((s, i) => {
      let best: number | undefined;
      for (const w of ws) {
        const k = w.kept[i];
        if (k !== undefined && (best === undefined || k > best)) best = k;
      }
      return best;
    });
    used = ws.reduce((a, w) => a + w.used, 0);
    state = packed.result.overBeforePassages ? 'over-before-passages' : 'ok';
  } else {
    const result = plan.pack(ctx);
    reasons = 'reasons' in result ? (result.reasons as Map<number, DropReason>) : undefined;
    kept = segments.map((_, i) => meter.keptChars(i));
    used = meter.used();
    state = result.overBeforePassages ? 'over-before-passages' : used > budget ? 'over-budget' : 'ok';
  }

  // A copy: unknown fields stay, only the re-pack's decisions change.
  const out: LogRecord = { ...record, model: { ...record.model, window, reserve }, plan: plan.name, segments: [...segments] };
  if (opts.encoding !== undefined) out.model.encoding = encoding;
  out.sent = sentList(segments, kept, reasons);
  if (windows) out.fusion = { window: fusionWindow, used, windows };
  else if ('fusion' in out) delete out.fusion;
  return {
    record: out,
    encoding,
    window,
    reserve,
    budget,
    plan: plan.name,
    used,
    state,
    fates: segments.map((s, i) => fateOf(s.text, kept[i])),
    chars: kept,
    windows,
  };
}
