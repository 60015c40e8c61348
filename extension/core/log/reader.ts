/**
 * Streaming log reader: splits a byte stream into lines without ever holding more than one line
 * (bounded by `maxLineBytes`), handles a UTF-8 BOM, CRLF and blank lines, and reports every
 * malformed line with line, column and a plain-words reason while carrying on with the rest.
 */
import type { LocatedRecord, LogIssue } from './types';
import { parseRecordLine } from './validate';
import { concatBytes } from '../text/bytes';

export { parseRecordLine } from './validate';

export interface ReadOptions {
  /** Lines longer than this (bytes) are reported and skipped without being buffered. Default 64 MiB. */
  maxLineBytes?: number;
}

/** Where a byte range of a log starts, for reading a part of it (the parallel audit's workers). */
export interface RangeStart {
  /** Byte offset of the range's first byte in the file; a BOM is only looked for at offset 0. */
  offset: number;
  /** Line number of the range's first line. */
  line: number;
}

export const DEFAULT_MAX_LINE_BYTES = 64 * 1024 * 1024;

export interface RawLine {
  line: number;
  /** Byte offset of the line's first byte in the source. */
  offset: number;
  text: string;
}

const utf8 = new TextDecoder('utf-8', { fatal: true });


/** Yields non-blank lines (or an issue for a line that cannot be read as text). */
export async function* readLogLines(
  chunks: AsyncIterable<Uint8Array> | Iterable<Uint8Array>,
  opts: ReadOptions = {},
  from: RangeStart = { offset: 0, line: 1 },
): AsyncGenerator<RawLine | { issue: LogIssue }> {
  const max = opts.maxLineBytes ?? DEFAULT_MAX_LINE_BYTES;
  let parts: Uint8Array[] = [];
  let partLen = 0;
  let lineNo = from.line;
  let lineStart = from.offset; // byte offset of current line
  let consumed = from.offset; // bytes consumed before current chunk
  let tooLong = false;

  const finish = (bytes: Uint8Array): RawLine | { issue: LogIssue } | undefined => {
    const line = lineNo;
    const offset = lineStart;
    if (tooLong) {
      return { issue: { line, column: max + 1, code: 'line-too-long', message: `line is longer than the limit of ${max} bytes; skipped` } };
    }
    let b = bytes;
    let skip = 0;
    if (offset === 0 && b.length >= 3 && b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) skip = 3;
    let end = b.length;
    if (end > skip && b[end - 1] === 0x0d) end--;
    b = b.subarray(skip, end);
    if (b.length === 0) return undefined;
    let text: string;
    try {
      text = utf8.decode(b);
    } catch {
      return { issue: { line, column: 1, code: 'bad-encoding', message: 'line is not valid UTF-8' } };
    }
    if (text.trim() === '') return undefined;
    return { line, offset: offset + skip, text };
  };

  for await (const chunk of chunks) {
    let start = 0;
    for (;;) {
      const nl = chunk.indexOf(10, start);
      if (nl === -1) {
        const rest = chunk.length - start;
        if (rest > 0 && !tooLong) {
          if (partLen + rest > max) {
            tooLong = true;
            parts = [];
            partLen = 0;
          } else {
            parts.push(chunk.subarray(start));
            partLen += rest;
          }
        }
        break;
      }
      const piece = chunk.subarray(start, nl);
      if (!tooLong && partLen + piece.length > max) tooLong = true;
      let out: RawLine | { issue: LogIssue } | undefined;
      if (tooLong) out = finish(piece);
      else {
        parts.push(piece);
        partLen += piece.length;
        out = finish(concatBytes(parts, partLen));
      }
      if (out) yield out;
      parts = [];
      partLen = 0;
      tooLong = false;
      lineNo++;
      lineStart = consumed + nl + 1;
      start = nl + 1;
    }
    consumed += chunk.length;
  }
  if (partLen > 0 || tooLong) {
    const out = finish(concatBytes(parts, partLen));
    if (out) yield out;
  }
}

export type ReadItem = LocatedRecord | { issue: LogIssue };

/** Reads a log: yields located records and issues, in file order. */
export async function* readLog(chunks: AsyncIterable<Uint8Array> | Iterable<Uint8Array>, opts: ReadOptions = {}): AsyncGenerator<ReadItem> {
  for await (const raw of readLogLines(chunks, opts)) {
    if ('issue' in raw) {
      yield raw;
      continue;
    }
    const parsed = parseRecordLine(raw.text, raw.line);
    if ('issue' in parsed) yield parsed;
    else yield { line: raw.line, offset: raw.offset, record: parsed.record };
  }
}

/** Convenience for text already in memory (editor documents, tests). */
export function readLogText(text: string, opts: ReadOptions = {}): { records: LocatedRecord[]; issues: LogIssue[] } {
  const records: LocatedRecord[] = [];
  const issues: LogIssue[] = [];
  const max = opts.maxLineBytes ?? DEFAULT_MAX_LINE_BYTES;
  const src = text.charCodeAt(0) === 0xfeff ? text.slice(1) : text;
  let lineNo = 0;
  let offset = 0;
  for (const rawLine of src.split('\n')) {
    lineNo++;
    const lineText = rawLine.endsWith('\r') ? rawLine.slice(0, -1) : rawLine;
    const here = offset;
    offset += rawLine.length + 1;
    if (lineText.trim() === '') continue;
    if (lineText.length > max) {
      issues.push({ line: lineNo, column: max + 1, code: 'line-too-long', message: `line is longer than the limit of ${max} characters; skipped` });
      continue;
    }
    const parsed = parseRecordLine(lineText, lineNo);
    if ('issue' in parsed) issues.push(parsed.issue);
    else records.push({ line: lineNo, offset: here, record: parsed.record });
  }
  return { records, issues };
}
