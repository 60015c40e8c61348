/**
 * Finding passage blocks inside one message's text, and cutting the message into segments so that
 * Spillway's rendering (segment texts joined with JOINER) reproduces it.
 */
import { JOINER } from '../log/types';
import type { ResolvedImportOptions, LayoutMode } from './options';

export interface PassageBlock {
  /** UTF-16 offsets of the whole block (wrapper included) in the message text. */
  start: number;
  end: number;
  /** Offsets of the passage text proper (wrapper excluded). */
  innerStart: number;
  innerEnd: number;
  id?: string;
  score?: number;
  source?: string;
  date?: string;
}

export interface FoundBlocks {
  blocks: PassageBlock[];
  /** Which splitter found them, for the inspect output. */
  by: string;
  /** A bad user pattern etc. */
  error?: string;
}

type Splitter = ResolvedImportOptions['splitter'];

function escapeRegExp(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

const ATTR = /([A-Za-z_][\w.:-]*)\s*=\s*(?:"([^"]*)"|'([^']*)'|([^\s"'>]+))/g;

function parseAttributes(s: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const m of s.matchAll(ATTR)) out[m[1]!.toLowerCase()] = m[2] ?? m[3] ?? m[4] ?? '';
  return out;
}

function num(s: string | undefined): number | undefined {
  if (s === undefined || s.trim() === '') return undefined;
  const n = Number(s);
  return Number.isFinite(n) ? n : undefined;
}

export function findTagBlocks(text: string, tag: string, idAttribute: string): PassageBlock[] {
  const t = escapeRegExp(tag);
  const re = new RegExp(`<${t}\\b([^>]*)>([\\s\\S]*?)</${t}\\s*>`, 'gi');
  const out: PassageBlock[] = [];
  for (const m of text.matchAll(re)) {
    const start = m.index;
    const openLen = m[0].length - m[2]!.length - m[0].slice(m[0].lastIndexOf('</')).length;
    const attrs = parseAttributes(m[1] ?? '');
    out.push({
      start,
      end: start + m[0].length,
      innerStart: start + openLen,
      innerEnd: start + openLen + m[2]!.length,
      id: attrs[idAttribute.toLowerCase()] || undefined,
      score: num(attrs['score']),
      source: attrs['source'] ?? attrs['url'],
      date: attrs['date'],
    });
  }
  return out;
}

/** `[n]` at the start of a line opens a block; it runs to the next marker line or the first blank line. */
export function findNumberedBlocks(text: string): PassageBlock[] {
  const markers = [...text.matchAll(/^\[(\d+)\][ \t]*/gm)];
  const out: PassageBlock[] = [];
  markers.forEach((m, i) => {
    const start = m.index;
    const limit = i + 1 < markers.length ? markers[i + 1]!.index : text.length;
    const blank = /\n[ \t]*\n/g;
    blank.lastIndex = start;
    const b = blank.exec(text);
    let end = b && b.index < limit ? b.index : limit;
    while (end > start && /\s/.test(text[end - 1]!)) end--;
    out.push({ start, end, innerStart: Math.min(start + m[0].length, end), innerEnd: end, id: m[1] });
  });
  return out;
}

/** Blocks between lines equal to `sep`; each block starts at its opening separator line. */
export function findSeparatorBlocks(text: string, sep: string): PassageBlock[] {
  const lines: Array<{ start: number; end: number }> = [];
  let at = 0;
  while (at <= text.length) {
    const nl = text.indexOf('\n', at);
    const end = nl === -1 ? text.length : nl;
    if (text.slice(at, end).trim() === sep.trim()) lines.push({ start: at, end });
    if (nl === -1) break;
    at = nl + 1;
  }
  const out: PassageBlock[] = [];
  for (let i = 0; i + 1 < lines.length; i++) {
    const open = lines[i]!;
    const close = lines[i + 1]!;
    let innerStart = Math.min(open.end + 1, close.start);
    let end = close.start;
    while (end > innerStart && /\s/.test(text[end - 1]!)) end--;
    while (innerStart < end && /\s/.test(text[innerStart]!)) innerStart++;
    if (end <= innerStart) continue;
    out.push({ start: open.start, end, innerStart, innerEnd: end, id: `p${out.length + 1}` });
  }
  return out;
}

export function findRegexBlocks(text: string, pattern: string, flags: string): PassageBlock[] {
  const f = flags.includes('g') ? flags : flags + 'g';
  const re = new RegExp(pattern, f.includes('d') ? f : f + 'd');
  const out: PassageBlock[] = [];
  for (const m of text.matchAll(re)) {
    if (m[0].length === 0) continue;
    const g = m.groups ?? {};
    const span = (m as RegExpMatchArray & { indices?: { groups?: Record<string, [number, number] | undefined> } }).indices?.groups?.['text'];
    out.push({
      start: m.index!,
      end: m.index! + m[0].length,
      innerStart: span ? span[0] : m.index!,
      innerEnd: span ? span[1] : m.index! + m[0].length,
      id: g['id'] || undefined,
      score: num(g['score']),
    });
  }
  return out;
}

/** Checks a user pattern once; returns a reason when it is unusable. */
export function checkPattern(pattern: string | undefined, flags: string): string | undefined {
  if (!pattern) return 'the regex splitter needs a pattern';
  try {
    const re = new RegExp(pattern, flags.replace(/[gd]/g, ''));
    if (!/\(\?<text>/.test(re.source)) return 'the pattern has no named group "text"';
  } catch (e) {
    return `the pattern is not a valid regular expression: ${(e as Error).message}`;
  }
  return undefined;
}

export function findBlocks(text: string, s: Splitter): FoundBlocks {
  switch (s.kind) {
    case 'none':
      return { blocks: [], by: 'none' };
    case 'tag':
      return { blocks: findTagBlocks(text, s.tag, s.idAttribute), by: `tag <${s.tag}>` };
    case 'numbered':
      return { blocks: findNumberedBlocks(text), by: 'numbered [n]' };
    case 'separator':
      return { blocks: findSeparatorBlocks(text, s.separator), by: `separator "${s.separator}"` };
    case 'regex': {
      const bad = checkPattern(s.pattern, s.flags);
      if (bad) return { blocks: [], by: 'regex', error: bad };
      return { blocks: findRegexBlocks(text, s.pattern!, s.flags), by: 'regex' };
    }
    case 'auto': {
      const tags = findTagBlocks(text, s.tag, s.idAttribute);
      if (tags.length) return { blocks: tags, by: `tag <${s.tag}> (auto)` };
      const numbered = findNumberedBlocks(text);
      if (numbered.length) return { blocks: numbered, by: 'numbered [n] (auto)' };
      return { blocks: [], by: 'auto' };
    }
  }
}

/** One segment's worth of a message. */
export interface Piece {
  text: string;
  /** The passage blocks inside this piece (empty for text outside passages). */
  blocks: PassageBlock[];
}

export interface Layout {
  pieces: Piece[];
  /** Plain-words notes about text kept together or separators changed. */
  notes: Array<{ code: 'import-merged' | 'import-reflowed'; message: string }>;
}

function joinerPositions(text: string, from: number, to: number): number[] {
  const out: number[] = [];
  let i = text.indexOf(JOINER, from);
  while (i !== -1 && i + JOINER.length <= to) {
    out.push(i);
    i = text.indexOf(JOINER, i + 1);
  }
  return out;
}

const quote = (s: string): string => JSON.stringify(s.length > 40 ? s.slice(0, 37) + '…' : s);
const label = (b: PassageBlock): string => (b.id !== undefined ? `"${b.id}"` : 'without id');

/**
 * Cuts `text` into pieces at blank lines around passage blocks. In `exact` mode, pieces joined with
 * JOINER equal `text` exactly: a cut is only made where the text has a JOINER, which the cut removes.
 */
export function layoutMessage(text: string, blocks: PassageBlock[], mode: LayoutMode): Layout {
  if (blocks.length === 0) return { pieces: [{ text, blocks: [] }], notes: [] };
  return mode === 'split' ? layoutSplit(text, blocks) : layoutExact(text, blocks);
}

function layoutExact(text: string, blocks: PassageBlock[]): Layout {
  const notes: Layout['notes'] = [];
  const J = JOINER.length;
  // groups of blocks that must share a segment, with the segment's [from, to)
  const groups: Array<{ blocks: PassageBlock[]; from: number; to: number }> = [];
  const outsides = new Map<number, string>(); // index of the group it precedes → text; groups.length = trailing
  const first = blocks[0]!;
  // leading gap: cut at the last JOINER that leaves non-empty text before it
  {
    const pos = joinerPositions(text, 0, first.start).filter((p) => p > 0);
    const b = pos.at(-1);
    let from = 0;
    if (b !== undefined) {
      outsides.set(0, text.slice(0, b));
      from = b + J;
    }
    const glued = text.slice(from, first.start);
    if (glued.trim()) notes.push({ code: 'import-merged', message: `text ${quote(glued.trim())} has no blank line before passage ${label(first)}; kept in that passage's segment so the message stays byte-exact` });
    groups.push({ blocks: [first], from, to: first.end });
  }
  for (let i = 1; i < blocks.length; i++) {
    const prev = blocks[i - 1]!;
    const b = blocks[i]!;
    const g = groups.at(-1)!;
    const pos = joinerPositions(text, prev.end, b.start);
    if (pos.length === 0) {
      notes.push({ code: 'import-merged', message: `passages ${label(prev)} and ${label(b)} are separated by ${quote(text.slice(prev.end, b.start))}, not a blank line; they share one segment so the message stays byte-exact` });
      g.blocks.push(b);
      g.to = b.end;
      continue;
    }
    const a = pos[0]!;
    const last = pos.at(-1)!;
    const middle = last >= a + J ? text.slice(a + J, last) : '';
    g.to = a;
    let from = a + J;
    if (middle !== '') {
      outsides.set(groups.length, middle);
      from = last + J;
    }
    const tail = text.slice(prev.end, a);
    const head = text.slice(from, b.start);
    if (tail.trim()) notes.push({ code: 'import-merged', message: `text ${quote(tail.trim())} after passage ${label(prev)} is kept in its segment (no blank line between them)` });
    if (head.trim()) notes.push({ code: 'import-merged', message: `text ${quote(head.trim())} before passage ${label(b)} is kept in its segment (no blank line between them)` });
    groups.push({ blocks: [b], from, to: b.end });
  }
  {
    const g = groups.at(-1)!;
    const last = g.blocks.at(-1)!;
    const pos = joinerPositions(text, last.end, text.length).filter((p) => p + J < text.length);
    const a = pos[0];
    if (a !== undefined) {
      g.to = a;
      outsides.set(groups.length, text.slice(a + J));
    } else {
      g.to = text.length;
    }
    const glued = text.slice(last.end, g.to);
    if (glued.trim()) notes.push({ code: 'import-merged', message: `text ${quote(glued.trim())} has no blank line after passage ${label(last)}; kept in that passage's segment so the message stays byte-exact` });
  }
  const pieces: Piece[] = [];
  groups.forEach((g, i) => {
    const o = outsides.get(i);
    if (o !== undefined) pieces.push({ text: o, blocks: [] });
    pieces.push({ text: text.slice(g.from, g.to), blocks: g.blocks });
  });
  const tail = outsides.get(groups.length);
  if (tail !== undefined) pieces.push({ text: tail, blocks: [] });
  if (pieces.map((p) => p.text).join(JOINER) !== text) {
    // Cannot happen by construction; keep the message whole rather than misstate it.
    return { pieces: [{ text, blocks }], notes: [{ code: 'import-merged', message: 'the message could not be cut byte-exactly; its passages share one segment' }] };
  }
  return { pieces, notes };
}

function layoutSplit(text: string, blocks: PassageBlock[]): Layout {
  const pieces: Piece[] = [];
  let at = 0;
  for (const b of blocks) {
    const before = text.slice(at, b.start).trim();
    if (before) pieces.push({ text: before, blocks: [] });
    pieces.push({ text: text.slice(b.innerStart, b.innerEnd).trim(), blocks: [b] });
    at = b.end;
  }
  const after = text.slice(at).trim();
  if (after) pieces.push({ text: after, blocks: [] });
  const joined = pieces.map((p) => p.text).join(JOINER);
  const notes: Layout['notes'] = [];
  if (joined !== text) {
    notes.push({ code: 'import-reflowed', message: `layout "split": passage wrappers and separators were replaced by blank lines; the rendered message has ${joined.length} characters instead of ${text.length}` });
  }
  return { pieces, notes };
}
