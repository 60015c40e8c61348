/**
 * The ledger of one record: exact tokens per segment and per kind, what was sent, and where the
 * budget went. Fates come from the record's `sent` list when it has one (and no what-if override
 * is given), otherwise from the packing plan.
 */
import type { Fate, LocatedRecord, LogRecord, SegmentKind } from '../log/types';
import { SEGMENT_KINDS } from '../log/types';
import type { Accountant } from '../tokens/accountant';
import { encodingForModel, isEncodingName, type EncodingName } from '../tokens/encoder';
import { framingName, framingNumbers } from '../tokens/framing';
import { PromptMeter } from '../pack/meter';
import { utf8Length } from '../text/utf8';
import { largeSegmentNote } from './notes';
import { isMandatory, parsePlan, type PlanResult } from '../pack/plans';
import type { AuditOptions, CutPoint, KindTotals, Ledger, SegmentLedger, TurnState } from './types';

/** Segments larger than this get a note with their size and counting time (guard rail for hostile text). */
export const LARGE_SEGMENT_CHARS = 200_000;

export class LedgerError extends Error {}


export function emptyKinds(): KindTotals {
  return Object.fromEntries(SEGMENT_KINDS.map((k) => [k, 0])) as KindTotals;
}

export function resolveEncoding(record: LogRecord, opts: AuditOptions): EncodingName {
  const name = opts.encoding ?? record.model.encoding ?? encodingForModel(record.model.name);
  if (!name || !isEncodingName(name)) throw new LedgerError(`unknown encoding "${name ?? record.model.name}"`);
  return name;
}

export interface Budgeting {
  window: number;
  reserve: number;
  budget: number;
}

export function resolveBudget(record: LogRecord, opts: AuditOptions): Budgeting {
  const reserve = opts.reserve ?? record.model.reserve;
  if (opts.budget !== undefined) return { budget: opts.budget, reserve, window: opts.budget + reserve };
  return { window: record.model.window, reserve, budget: record.model.window - reserve };
}

const isWhatIf = (opts: AuditOptions): boolean =>
  opts.budget !== undefined || opts.reserve !== undefined || opts.encoding !== undefined || opts.plan !== undefined;

export interface Packed {
  meter: PromptMeter;
  result: PlanResult;
  budgeting: Budgeting;
  encoding: EncodingName;
  planName: string;
}

/** Packs a record under its own (or overridden) budget, encoding and plan. The encoder must be loaded. */
export function packRecord(record: LogRecord, opts: AuditOptions, acct: Accountant): Packed {
  const encoding = resolveEncoding(record, opts);
  const budgeting = resolveBudget(record, opts);
  const plan = parsePlan(opts.plan ?? record.plan);
  const meter = new PromptMeter(record.segments, framingNumbers(record.framing), acct, encoding, record.conversation);
  const result = plan.pack({ record, budget: budgeting.budget, meter });
  return { meter, result, budgeting, encoding, planName: plan.name };
}

function fateOf(meter: PromptMeter, i: number): Fate {
  const k = meter.keptChars(i);
  if (k === undefined) return 'dropped';
  return k >= meter.segments[i]!.text.length ? 'kept' : 'clipped';
}

/** Builds the ledger for one record. Call `prepare` (or load the encoder) first. */
export function buildLedger(located: LocatedRecord, opts: AuditOptions, acct: Accountant): Ledger {
  const { record } = located;
  const notes: string[] = [];
  const encoding = resolveEncoding(record, opts);
  const large = new Map<string, { bytes: number; countMs: number }>();
  for (const s of record.segments) {
    if (s.text.length >= LARGE_SEGMENT_CHARS) {
      const t0 = performance.now();
      acct.count(encoding, s.text);
      const info = { bytes: utf8Length(s.text), countMs: Math.round(performance.now() - t0) };
      large.set(s.id, info);
      notes.push(largeSegmentNote(s.kind, s.id, info));
    }
  }
  const packed = packRecord(record, opts, acct);
  const { meter, budgeting } = packed;
  const planFates = record.segments.map((_, i) => fateOf(meter, i));
  const planCuts = packed.result.cuts;

  let fatesFrom: Ledger['fatesFrom'] = 'plan';
  const cuts = new Map<number, CutPoint>(planCuts);
  if (record.sent && !isWhatIf(opts)) {
    fatesFrom = 'sent';
    cuts.clear();
    const sentById = new Map(record.sent.map((s) => [s.id, s]));
    record.segments.forEach((seg, i) => {
      const s = sentById.get(seg.id);
      if (!s || s.fate === 'dropped') meter.exclude(i);
      else if (s.fate === 'kept') meter.include(i);
      else {
        const chars = Math.min(s.chars ?? 0, seg.text.length);
        meter.set(i, chars);
        const keptTokens = acct.count(encoding, seg.text.slice(0, chars));
        cuts.set(i, { token: keptTokens, char: chars });
      }
    });
  }

  const byKind = emptyKinds();
  let spill = 0;
  let keptSum = 0;
  const segments: SegmentLedger[] = record.segments.map((seg, i) => {
    const fate = fateOf(meter, i);
    const tokens = meter.tokens[i]!;
    const keptTokens = fate === 'kept' ? tokens : fate === 'dropped' ? 0 : acct.count(encoding, meter.keptText(i));
    byKind[seg.kind as SegmentKind] += keptTokens;
    keptSum += keptTokens;
    spill += Math.max(0, tokens - keptTokens);
    const out: SegmentLedger = { id: seg.id, kind: seg.kind, role: seg.role, message: meter.messageOf[i]!, tokens, keptTokens, fate };
    if (seg.rank !== undefined) out.rank = seg.rank;
    if (seg.score !== undefined) out.score = seg.score;
    const cut = cuts.get(i);
    if (fate === 'clipped' && cut) out.cut = cut;
    const big = large.get(seg.id);
    if (big) out.large = big;
    if (fatesFrom === 'sent' && planFates[i] !== fate) {
      out.planFate = planFates[i];
      notes.push(`${seg.kind} ${seg.id}: sent ${fate}, the ${packed.planName} plan would have ${planFates[i]} it`);
    }
    return out;
  });

  const used = meter.used();
  const framing = meter.framingTokens();
  const { budget } = budgeting;
  let state: TurnState = 'ok';
  if (used > budget) {
    state = packed.result.overBeforePassages || mandatoryExceeds(record, meter, budget) ? 'over-before-passages' : 'over-budget';
  }

  // Whole prompt with nothing cut, for the "full" figure.
  const full = fullCount(meter);

  const passages = segments.filter((s) => s.kind === 'passage');
  let rank1Fate: Fate | undefined;
  if (passages.length) rank1Fate = passages.reduce((a, b) => ((b.rank ?? Infinity) < (a.rank ?? Infinity) ? b : a)).fate;

  const ledger: Ledger = {
    line: located.line,
    conversation: record.conversation,
    turn: record.turn,
    model: record.model.name,
    encoding,
    window: budgeting.window,
    reserve: budgeting.reserve,
    budget,
    framingProfile: framingName(record.framing),
    framing,
    joins: used - framing - keptSum,
    used,
    free: Math.max(0, budget - used),
    over: Math.max(0, used - budget),
    spill,
    full,
    byKind,
    segments,
    state,
    fatesFrom,
    plan: packed.planName,
    notes,
  };
  if (rank1Fate) ledger.rank1Fate = rank1Fate;
  if (record.usage?.prompt !== undefined) ledger.usage = { prompt: record.usage.prompt, drift: record.usage.prompt - used };
  return ledger;
}

function mandatoryExceeds(record: LogRecord, meter: PromptMeter, budget: number): boolean {
  return meter.countWhole((i) => isMandatory(record.segments[i]!)) > budget;
}

function fullCount(meter: PromptMeter): number {
  return meter.countWhole(() => true);
}

/** Loads the encoder the record needs, then builds its ledger. */
export async function auditRecord(located: LocatedRecord, opts: AuditOptions, acct: Accountant): Promise<Ledger> {
  await acct.encoder(resolveEncoding(located.record, opts));
  return buildLedger(located, opts, acct);
}
