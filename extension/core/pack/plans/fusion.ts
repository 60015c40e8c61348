/**
 * `fusion:L` — the fusion-in-decoder layout (Izacard & Grave 2021): each passage is read in its own
 * window of at most L tokens together with the dialogue context. Per window: instructions and query
 * (mandatory), then the passage (whole at its allowed length, else clipped to ≥ 32 tokens, else it
 * gets no window), then history turns newest first while they fit L — so the oldest context is
 * what goes first. Windows are opened in rank order while the tokens of all windows together stay
 * within the budget; the first window that would overrun it ends the run.
 */
import type { CutPoint } from '../../audit/types';
import { historyGroupsNewestFirst, isMandatory, type PlanContext } from '../plans';
import { candidatePassages, PassagePlacer, type ComposedResult, type DropReason } from './passages';
import type { Modifiers } from './spec';

export interface FusionWindow {
  /** Segment index of the window's passage. */
  passage: number;
  /** Exact tokens of this window's prompt (with framing). */
  used: number;
  /** Kept characters per segment index in this window (undefined = not in it). */
  kept: (number | undefined)[];
  cut?: CutPoint;
}

export function packFusionWindows(ctx: PlanContext, L: number, mods: Modifiers, opts: { maxWindows?: number } = {}): { windows: FusionWindow[]; result: ComposedResult } {
  const { meter, budget } = ctx;
  const reasons = new Map<number, DropReason>();
  const candidates = candidatePassages(meter.segments, mods, reasons);
  const n = meter.segments.length;
  for (let i = 0; i < n; i++) if (isMandatory(meter.segments[i]!)) meter.include(i);
  else meter.exclude(i);
  const windows: FusionWindow[] = [];
  if (meter.used() > Math.min(L, budget)) return { windows, result: { overBeforePassages: true, cuts: new Map(), reasons } };
  const groups = historyGroupsNewestFirst(meter.segments);
  const max = opts.maxWindows ?? Number.POSITIVE_INFINITY;
  let spent = 0;
  let stopped = false;
  for (const p of candidates) {
    if (stopped || windows.length >= max) {
      reasons.set(p, 'no-window');
      continue;
    }
    for (let i = 0; i < n; i++) if (!isMandatory(meter.segments[i]!)) meter.exclude(i);
    const cuts = new Map<number, CutPoint>();
    const placer = new PassagePlacer(meter, mods, cuts, reasons);
    if (!placer.tryWhole(p, L) && !(placer.limit(p) && placer.clip(p, L))) {
      if (!reasons.has(p)) reasons.set(p, 'no-window');
      continue;
    }
    for (const g of groups) if (!meter.tryIncludeAll(g, L)) break;
    const used = meter.used();
    if (spent + used > budget) {
      stopped = true;
      reasons.set(p, 'no-window');
      continue;
    }
    spent += used;
    const w: FusionWindow = { passage: p, used, kept: meter.segments.map((_, i) => meter.keptChars(i)) };
    const cut = cuts.get(p);
    if (cut && meter.keptChars(p)! < meter.segments[p]!.text.length) w.cut = cut;
    windows.push(w);
  }
  // Leave the meter holding the first window (what a single-prompt ledger shows).
  const first = windows[0];
  for (let i = 0; i < n; i++) meter.set(i, first ? first.kept[i] : isMandatory(meter.segments[i]!) ? meter.segments[i]!.text.length : undefined);
  const cuts = new Map<number, CutPoint>();
  if (first?.cut) cuts.set(first.passage, first.cut);
  return { windows, result: { overBeforePassages: false, cuts, reasons } };
}
