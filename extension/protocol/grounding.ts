/**
 * The reply-grounding part of a turn's detail (host → panel): a compact view of the core's
 * TurnAnalysis (extension/core/analysis/types.ts), with sentence texts (untrusted: render as text)
 * and, for sentences whose evidence the budget cut, which words lie after the cut.
 * `checkGroundingView` validates the shape (pure; no vscode, no DOM).
 */
import type { Fate, SegmentKind } from '../core/log/types';

export type GroundingLabel = 'supported' | 'unsupported' | 'lost' | 'skipped';

export interface GroundingSupport {
  /** Segment id. */
  id: string;
  kind: SegmentKind;
  /** `kept`: the part that was sent; `spilled`: a clipped passage's whole text or a dropped passage. */
  part: 'kept' | 'spilled';
  /** Share of the sentence's content words found in that part, 0..1. */
  share: number;
  /** The shared content words, in sentence order. */
  overlap: string[];
}

export interface GroundingSentence {
  index: number;
  /** UTF-16 offsets of the sentence in the reply. */
  start: number;
  end: number;
  text: string;
  label: GroundingLabel;
  contentWords: number;
  /**
   * The part behind the label: the supporting kept part (`supported`), the spilled part that alone
   * supports it (`lost`), the closest part that fell short (`unsupported`); null when none shares a word.
   */
  support: GroundingSupport | null;
  /** `lost` only: the fate of the passage holding the words and which of them lie after its cut. */
  lost?: {
    fate: Fate;
    /** Cut point (UTF-16 offset in the passage text) of a clipped passage; null when dropped. */
    cutChar: number | null;
    /** Overlap words that occur only after the cut (all of them for a dropped passage). */
    afterCut: string[];
    /** Overlap words that also occur in the kept part. */
    beforeCut: string[];
  };
}

export interface GroundingView {
  sentences: GroundingSentence[];
  counts: Record<GroundingLabel, number>;
  knowledgeF1: number | null;
  knowledgeF1Basis: 'evidence' | 'best-passage' | null;
  /** TurnFlag values, in the core's fixed order. */
  flags: string[];
  lexical: { tau: number | null; best: string | null; bestRank: number | null; ratio: number | null; flagged: boolean } | null;
  duplicates: { pairs: Array<{ a: string; b: string; resemblance: number; wastedTokens: number }>; wastedTokens: number };
  /** Ids of passages older than the staleness limit. */
  stale: string[];
  position: { best: string | null; position: number | null; of: number; third: 'first' | 'middle' | 'last' | null; flagged: boolean };
}

// ---------------------------------------------------------------- validation
type Obj = Record<string, unknown>;
const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);
const isInt = (v: unknown): v is number => typeof v === 'number' && Number.isInteger(v) && v >= 0;
const isStr = (v: unknown): v is string => typeof v === 'string';
const orNull = (f: (v: unknown) => boolean) => (v: unknown) => v === null || f(v);
const strArr = (v: unknown): boolean => Array.isArray(v) && v.every(isStr);
const oneOf = (...vals: readonly unknown[]) => (v: unknown) => vals.includes(v);
const LABELS = ['supported', 'unsupported', 'lost', 'skipped'] as const;
const KINDS = ['instructions', 'history', 'query', 'passage', 'tool'] as const;
const FATES = ['kept', 'clipped', 'dropped'] as const;

/** Exactly these keys (optional ones may be absent), each passing its check; returns the first problem. */
function fields(v: unknown, where: string, req: Record<string, (x: unknown) => boolean | string | undefined>, opt: Record<string, (x: unknown) => boolean | string | undefined> = {}): string | undefined {
  if (!isObj(v)) return `${where}: not an object`;
  for (const k of Object.keys(v)) if (!(k in req) && !(k in opt)) return `${where}: unexpected "${k}"`;
  for (const [k, f] of Object.entries(req)) {
    if (!(k in v)) return `${where}: missing "${k}"`;
    const r = f(v[k]);
    if (r === false) return `${where}: bad "${k}"`;
    if (typeof r === 'string') return r;
  }
  for (const [k, f] of Object.entries(opt)) {
    if (v[k] === undefined) continue;
    const r = f(v[k]);
    if (r === false) return `${where}: bad "${k}"`;
    if (typeof r === 'string') return r;
  }
  return undefined;
}

const support = (where: string) => (v: unknown) =>
  v === null
    ? undefined
    : fields(v, where, { id: isStr, kind: oneOf(...KINDS), part: oneOf('kept', 'spilled'), share: isNum, overlap: strArr });

function sentence(v: unknown, i: number): string | undefined {
  const w = `grounding.sentences[${i}]`;
  return fields(
    v,
    w,
    { index: isInt, start: isInt, end: isInt, text: isStr, label: oneOf(...LABELS), contentWords: isInt, support: support(`${w}.support`) },
    { lost: (x) => fields(x, `${w}.lost`, { fate: oneOf(...FATES), cutChar: orNull(isInt), afterCut: strArr, beforeCut: strArr }) },
  );
}

/** Undefined when `v` is a well-formed GroundingView, else the first problem found. */
export function checkGroundingView(v: unknown): string | undefined {
  return fields(v, 'grounding', {
    sentences: (x) => (Array.isArray(x) ? x.map(sentence).find((p) => p !== undefined) : false),
    counts: (x) => fields(x, 'grounding.counts', Object.fromEntries(LABELS.map((l) => [l, isInt]))),
    knowledgeF1: orNull(isNum),
    knowledgeF1Basis: oneOf('evidence', 'best-passage', null),
    flags: strArr,
    lexical: (x) =>
      x === null
        ? undefined
        : fields(x, 'grounding.lexical', { tau: orNull(isNum), best: orNull(isStr), bestRank: orNull(isNum), ratio: orNull(isNum), flagged: (b) => typeof b === 'boolean' }),
    duplicates: (x) =>
      fields(x, 'grounding.duplicates', {
        pairs: (p) =>
          Array.isArray(p) ? p.map((q, i) => fields(q, `grounding.duplicates.pairs[${i}]`, { a: isStr, b: isStr, resemblance: isNum, wastedTokens: isInt })).find((e) => e !== undefined) : false,
        wastedTokens: isInt,
      }),
    stale: strArr,
    position: (x) =>
      fields(x, 'grounding.position', { best: orNull(isStr), position: orNull(isInt), of: isInt, third: oneOf('first', 'middle', 'last', null), flagged: (b) => typeof b === 'boolean' }),
  });
}
