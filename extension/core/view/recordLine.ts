/**
 * Where things sit inside one record line: the column spans of each segment's `text` and `id`
 * values, the `model` object, `usage.prompt` and the `evidence` ids. Diagnostics and hovers need
 * columns in the raw JSON line, which differ from offsets into the decoded text wherever the JSON
 * has escapes; `rawColumnForChar` / `charForRawColumn` convert between the two.
 * Columns are 0-based UTF-16 code units (what the editor uses).
 */
import { parseTree, type Node, type ParseError } from 'jsonc-parser';

/** Half-open column span [start, end) in the line. For string values it includes the quotes. */
export interface Span {
  start: number;
  end: number;
}

export interface SegmentLocation {
  /** Index in the record's `segments` array. */
  index: number;
  id?: string;
  /** The whole segment object. */
  span: Span;
  idSpan?: Span;
  /** The `text` string literal, quotes included. */
  text?: Span;
}

export interface RecordLineMap {
  segments: SegmentLocation[];
  model?: Span;
  usagePrompt?: Span;
  evidence: Array<{ id: string; span: Span }>;
  /** The whole JSON value on the line (without surrounding blanks). */
  record: Span;
}

function span(node: Node): Span {
  return { start: node.offset, end: node.offset + node.length };
}

function prop(obj: Node | undefined, key: string): Node | undefined {
  if (!obj || obj.type !== 'object' || !obj.children) return undefined;
  for (const p of obj.children) {
    const [k, v] = p.children ?? [];
    if (k && k.value === key) return v;
  }
  return undefined;
}

/** Locates the parts of a record line; undefined when the line is not a JSON object. */
export function locateRecordLine(lineText: string): RecordLineMap | undefined {
  const errors: ParseError[] = [];
  const root = parseTree(lineText, errors, { disallowComments: true, allowTrailingComma: false });
  if (!root || root.type !== 'object') return undefined;
  const map: RecordLineMap = { segments: [], evidence: [], record: span(root) };
  const segs = prop(root, 'segments');
  if (segs?.type === 'array') {
    (segs.children ?? []).forEach((seg, index) => {
      const loc: SegmentLocation = { index, span: span(seg) };
      const id = prop(seg, 'id');
      if (id?.type === 'string') {
        loc.id = String(id.value);
        loc.idSpan = span(id);
      }
      const text = prop(seg, 'text');
      if (text?.type === 'string') loc.text = span(text);
      map.segments.push(loc);
    });
  }
  const model = prop(root, 'model');
  if (model) map.model = span(model);
  const prompt = prop(prop(root, 'usage'), 'prompt');
  if (prompt) map.usagePrompt = span(prompt);
  const evidence = prop(root, 'evidence');
  if (evidence?.type === 'array') {
    for (const e of evidence.children ?? []) if (e.type === 'string') map.evidence.push({ id: String(e.value), span: span(e) });
  }
  return map;
}

/**
 * Column in the line of decoded character `charIndex` of the string literal at `literal`
 * (quotes included). `charIndex` = decoded length gives the closing quote's column.
 */
export function rawColumnForChar(lineText: string, literal: Span, charIndex: number): number {
  let col = literal.start + 1;
  const last = literal.end - 1;
  for (let n = 0; n < charIndex && col < last; n++) col += escapeWidth(lineText, col);
  return Math.min(col, last);
}

/** Decoded character index at column `col` inside the string literal at `literal` (clamped to the value). */
export function charForRawColumn(lineText: string, literal: Span, col: number): number {
  let c = literal.start + 1;
  let n = 0;
  const target = Math.min(Math.max(col, c), literal.end - 1);
  while (c < target) {
    c += escapeWidth(lineText, c);
    n++;
  }
  return n;
}

/** Raw width of one decoded UTF-16 unit starting at `col`: `\uXXXX` is 6, other escapes 2, plain 1. */
function escapeWidth(lineText: string, col: number): number {
  if (lineText.charCodeAt(col) !== 0x5c /* \ */) return 1;
  return lineText[col + 1] === 'u' ? 6 : 2;
}
