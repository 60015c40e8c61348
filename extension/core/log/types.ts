/**
 * Spillway log format, version 1: one JSON object per line, one record per assembled prompt.
 * The JSON Schema twin lives in `schema/spillway-log-v1.schema.json`; keep both in step.
 * Unknown fields are kept on every object (the index signatures) and written back by re-pack.
 */

export const SEGMENT_KINDS = ['instructions', 'history', 'query', 'passage', 'tool'] as const;
export type SegmentKind = (typeof SEGMENT_KINDS)[number];

export const ROLES = ['system', 'developer', 'user', 'assistant', 'tool'] as const;
export type Role = (typeof ROLES)[number];

export type Fate = 'kept' | 'clipped' | 'dropped';

export interface Segment {
  id: string;
  kind: SegmentKind;
  role: Role;
  text: string;
  /** Chat-message author name; costs one extra framing token in the published rule. */
  name?: string;
  /** Segments that share a `message` index are joined into one chat message (see `JOINER`). */
  message?: number;
  /** For history segments: the turn the text came from (whole turns are kept or dropped together). */
  turn?: number;
  /** Passages only. 1 = best. */
  rank?: number;
  score?: number;
  source?: string;
  /** ISO date of the passage's content, for staleness checks. */
  date?: string;
  [unknown: string]: unknown;
}

export interface ModelSpec {
  name: string;
  /** Tokenizer encoding; when absent it is derived from `name`. */
  encoding?: string;
  window: number;
  reserve: number;
  [unknown: string]: unknown;
}

/** Custom framing numbers; `chat` and `none` are named profiles. */
export interface FramingNumbers {
  perMessage: number;
  perName: number;
  priming: number;
  /** Whether the role (and name) strings are encoded and counted (true in the published chat rule). */
  countRole: boolean;
}
export type FramingSpec = 'chat' | 'none' | FramingNumbers;

/** What the assembler says it actually sent for one segment. */
export interface SentSegment {
  id: string;
  fate: Fate;
  /** For clipped segments: how many characters (UTF-16 code units) of `text` were sent. */
  chars?: number;
  [unknown: string]: unknown;
}

export interface Usage {
  prompt?: number;
  completion?: number;
  [unknown: string]: unknown;
}

export interface LogRecord {
  v: 1;
  conversation: string;
  turn: number;
  time?: string;
  model: ModelSpec;
  framing?: FramingSpec;
  plan?: string;
  segments: Segment[];
  reply?: string;
  usage?: Usage;
  /** Reviewer-marked passage ids the reply should rest on. */
  evidence?: string[];
  sent?: SentSegment[];
  [unknown: string]: unknown;
}

/** Texts of segments sharing one chat message are joined with this. */
export const JOINER = '\n\n';

/** A problem found in one line of a log. Lines and columns are 1-based. */
export interface LogIssue {
  line: number;
  column: number;
  /** Machine-readable code, e.g. `bad-json`, `missing-field`, `wrong-type`, `unknown-encoding`, `line-too-long`. */
  code: string;
  message: string;
}

/** A record with where it came from in the file. */
export interface LocatedRecord {
  line: number;
  /** Where the line starts: bytes of the original file when streamed (`readLog`), UTF-16 units of the text for `readLogText`. Used for progress. */
  offset: number;
  record: LogRecord;
}
