/**
 * Entry points of the importers: whole text (editor, tests) and streamed lines (CLI, large files).
 * Nothing here touches the file system: callers read, these convert in memory.
 */
import type { LocatedRecord, LogIssue } from '../log/types';
import { importChatLine } from './chat';
import type { ImportedRecord, RecordExplain } from './chat';
import { resolveImportOptions } from './options';
import type { ImportOptions } from './options';
import { checkPattern } from './split';
import { flattenTraces, importSpans, spanLinesOfDocument, spansOfLine } from './otlp';
import type { FlatSpan } from './otlp';
import { utf8Length } from '../text/utf8';

export type { ImportOptions, SplitterOptions, SplitterKind, LayoutMode } from './options';
export { IMPORT_SETTINGS, importOptionsFromSettings } from './options';
export type { RecordExplain } from './chat';
export type { MessageExplain } from './messages';
export { detectFormat } from './detect';
export type { InputFormat } from './detect';
export { formatInspection } from './inspect';

export type ImportFormat = 'chat' | 'otlp';

export interface ConvertResult {
  records: LocatedRecord[];
  issues: LogIssue[];
  /** Per record, how each message was mapped and why (same order as `records`). */
  explain: RecordExplain[];
}

export interface SourceLine {
  line: number;
  text: string;
  /** Byte offset of the line in the file, when the caller knows it. */
  offset?: number;
}

export type ConvertEvent =
  | { type: 'record'; record: LocatedRecord; explain: RecordExplain }
  | { type: 'issue'; issue: LogIssue };


/** Splits text into lines with 1-based numbers and UTF-8 byte offsets (BOM and CR handled). */
export function* textLines(text: string): Generator<SourceLine> {
  let at = 0;
  let offset = 0;
  let line = 1;
  if (text.charCodeAt(0) === 0xfeff) {
    at = 1;
    offset = 3;
  }
  while (at <= text.length) {
    const nl = text.indexOf('\n', at);
    const end = nl === -1 ? text.length : nl;
    const raw = text.slice(at, end);
    const body = raw.endsWith('\r') ? raw.slice(0, -1) : raw;
    if (body.trim() !== '') yield { line, text: body, offset };
    if (nl === -1) break;
    offset += utf8Length(raw) + 1;
    at = nl + 1;
    line++;
  }
}

function optionIssues(opts: ImportOptions | undefined): LogIssue[] {
  const s = opts?.splitter;
  if (s?.kind === 'regex') {
    const bad = checkPattern(s.pattern, s.flags ?? 'm');
    if (bad) return [{ line: 1, column: 1, code: 'import-bad-splitter', message: `splitter option: ${bad}` }];
  }
  return [];
}

const located = (r: ImportedRecord, line: number, offset: number): LocatedRecord => ({ line, offset, record: r.record });

/**
 * Incremental converter: feed lines, get events. Chat logs are converted line by line (bounded
 * memory). OTLP spans of one trace may sit on different lines, so the spans that matter (model calls,
 * retrieval and tool spans; others are dropped on reading) are held until `finish()`.
 */
export class Converter {
  private readonly o;
  private readonly spans: FlatSpan[] = [];
  private readonly offsets = new Map<number, number>();
  private pending: SourceLine[] | undefined; // a pretty-printed single document
  private seen = 0;

  constructor(
    private readonly from: ImportFormat,
    private readonly opts?: ImportOptions,
  ) {
    this.o = resolveImportOptions(opts);
  }

  start(): ConvertEvent[] {
    return optionIssues(this.opts).map((issue) => ({ type: 'issue', issue }));
  }

  push(l: SourceLine | { issue: LogIssue }): ConvertEvent[] {
    if ('issue' in l) return [{ type: 'issue', issue: l.issue }];
    if (this.from === 'chat') {
      const r = importChatLine(l.text, l.line, this.o);
      const ev: ConvertEvent[] = r.issues.map((issue) => ({ type: 'issue', issue }));
      if (r.result) ev.push({ type: 'record', record: located(r.result, l.line, l.offset ?? 0), explain: r.result.explain });
      return ev;
    }
    if (this.pending) {
      if (this.pending.length === 1 && l.text.trimStart().startsWith('{')) {
        // A second line that is a whole JSON object: the file is one object per line, not one document.
        const r2 = spansOfLine(l.text, l.line);
        if (!r2.issue) {
          const first = this.pending[0]!;
          this.pending = undefined;
          this.seen = 1;
          const ev: ConvertEvent[] = [];
          const r1 = spansOfLine(first.text, first.line);
          if (r1.issue) ev.push({ type: 'issue', issue: r1.issue });
          this.offsets.set(l.line, l.offset ?? 0);
          for (const sp of r2.spans) if (keep(sp)) this.spans.push(sp);
          return ev;
        }
      }
      this.pending.push(l);
      return [];
    }
    const r = spansOfLine(l.text, l.line);
    if (r.issue && this.seen === 0 && r.issue.code === 'bad-json' && l.text.trim().startsWith('{')) {
      this.pending = [l];
      return [];
    }
    this.seen++;
    this.offsets.set(l.line, l.offset ?? 0);
    for (const s of r.spans) if (keep(s)) this.spans.push(s);
    return r.issue ? [{ type: 'issue', issue: r.issue }] : [];
  }

  finish(): ConvertEvent[] {
    if (this.from === 'chat') return [];
    const ev: ConvertEvent[] = [];
    if (this.pending) {
      const first = this.pending[0]!;
      // Rebuild the document with its original line breaks so span lines can be located.
      let text = '';
      let line = first.line;
      for (const p of this.pending) {
        text += '\n'.repeat(p.line - line) + p.text;
        line = p.line;
      }
      let doc: unknown;
      try {
        doc = JSON.parse(text);
      } catch {
        doc = undefined;
      }
      if (doc !== undefined) {
        const lineOf = spanLinesOfDocument(text);
        this.spans.push(...flattenTraces(doc, (a, b, c) => lineOf(a, b, c) + first.line - 1).filter(keep));
        this.offsets.set(first.line, first.offset ?? 0);
      } else {
        // Not one document after all: a one-object-per-line file whose first line is broken.
        const lines = this.pending;
        this.pending = undefined;
        this.seen = 1;
        for (const l of lines) {
          const r = spansOfLine(l.text, l.line);
          this.offsets.set(l.line, l.offset ?? 0);
          if (r.issue) ev.push({ type: 'issue', issue: r.issue });
          for (const sp of r.spans) if (keep(sp)) this.spans.push(sp);
        }
      }
    }
    const r = importSpans(this.spans, this.o);
    for (const issue of r.issues) ev.push({ type: 'issue', issue });
    for (const x of r.results) ev.push({ type: 'record', record: located(x, x.line, this.offsets.get(x.line) ?? 0), explain: x.explain });
    return ev;
  }
}

/** Streams records out of lines (e.g. the lead's `readLogLines`). */
export async function* convertLines(
  lines: AsyncIterable<SourceLine | { issue: LogIssue }> | Iterable<SourceLine | { issue: LogIssue }>,
  from: ImportFormat,
  opts?: ImportOptions,
): AsyncGenerator<ConvertEvent> {
  const c = new Converter(from, opts);
  yield* c.start();
  for await (const l of lines) yield* c.push(l);
  yield* c.finish();
}

/** Spans that can matter for a record; plain HTTP/DB spans are dropped on reading to bound memory. */
function keep(s: FlatSpan): boolean {
  for (const k in s.attrs) if (k.startsWith('gen_ai.')) return true;
  return s.events.some((e) => e.name.startsWith('gen_ai.'));
}

/** Converts a whole text in memory (the editor's path). Same code path as `convertLines`. */
export function convertText(text: string, from: ImportFormat, opts?: ImportOptions): ConvertResult {
  const out: ConvertResult = { records: [], issues: [], explain: [] };
  const take = (events: ConvertEvent[]): void => {
    for (const e of events) {
      if (e.type === 'record') {
        out.records.push(e.record);
        out.explain.push(e.explain);
      } else out.issues.push(e.issue);
    }
  };
  const c = new Converter(from, opts);
  take(c.start());
  for (const l of textLines(text)) take(c.push(l));
  take(c.finish());
  return out;
}

/** Codes of issues where a line or span gave no record at all (the others annotate a converted record). */
export const SKIP_CODES: ReadonlySet<string> = new Set(['bad-json', 'bad-encoding', 'line-too-long', 'import-skipped', 'import-bad-splitter']);

/**
 * Imported records in the reader's item shape, for `auditItems` (e.g. `spillway audit --from chat`
 * or the editor): records plus the issues of lines that gave no record. Notes about converted records
 * (merged passages, parts not counted, …) are left out unless `notes` is set, so they do not count
 * as malformed lines in an audit summary.
 */
export async function* importedLogItems(
  lines: AsyncIterable<SourceLine | { issue: LogIssue }> | Iterable<SourceLine | { issue: LogIssue }>,
  from: ImportFormat,
  opts?: ImportOptions,
  notes = false,
): AsyncGenerator<LocatedRecord | { issue: LogIssue }> {
  for await (const e of convertLines(lines, from, opts)) {
    if (e.type === 'record') yield e.record;
    else if (notes || SKIP_CODES.has(e.issue.code)) yield { issue: e.issue };
  }
}
