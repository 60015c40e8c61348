import type { LogIssue } from '../log/types';
import type { TurnState } from '../audit/types';

export interface RepackOptions {
  /** Tokens for the prompt (window − reserve); default: each record's own. */
  budget?: number;
  reserve?: number;
  encoding?: string;
  /** Packing plan spec; default: each record's own, else recent-first. */
  plan?: string;
}

/** Per-model prices in currency units per million input tokens; `*` applies to every model not named. */
export type Prices = Record<string, number>;

export interface RepackSummary {
  records: number;
  /** Malformed lines (all of them are also in `issues`, up to its cap). */
  malformed: number;
  /** Malformed lines written to the output unchanged. */
  copiedVerbatim: number;
  issues: LogIssue[];
  states: Record<TurnState, number>;
  /** Exact tokens spent by the new packing, summed over records. */
  tokens: number;
  /** Records whose fates differ from the original packing (only counted when comparing). */
  changed?: number;
}
