/**
 * Shared by both importers: a list of chat messages (role + text) → Spillway segments, with the
 * reason for every mapping so `spillway inspect` can show it.
 */
import { ROLES } from '../log/types';
import type { Role, Segment, SegmentKind } from '../log/types';
import type { ResolvedImportOptions } from './options';
import { findBlocks, layoutMessage } from './split';
import type { PassageBlock } from './split';

/** A message after the source-specific parsing: text parts already joined. */
export interface SourceMessage {
  role: string;
  /** Undefined when the message had no text at all (e.g. only an image or tool calls). */
  text: string | undefined;
  name?: string;
  /** Parts or fields that were not mapped, with the reason. */
  unmapped: string[];
}

export interface MessageExplain {
  /** Index in the source message list. */
  index: number;
  role: string;
  /** Index of the Spillway message (segment `message` field), absent when skipped. */
  message?: number;
  kind?: SegmentKind;
  why: string;
  segments: Array<{ id: string; kind: SegmentKind; chars: number; rank?: number; score?: number; turn?: number; ids?: string[] }>;
}

export interface MappedMessages {
  segments: Segment[];
  explain: MessageExplain[];
  /** Turn of the query (1 + completed earlier exchanges). */
  turn: number;
  notes: Array<{ code: string; message: string }>;
  /** Record-level inferences for the inspect output (not problems). */
  info: string[];
}

export function resolveRole(role: string, o: ResolvedImportOptions): Role | undefined {
  const r = role.toLowerCase();
  if ((ROLES as readonly string[]).includes(r)) return r as Role;
  return o.roleAliases[r];
}

const DEFAULT_KIND: Record<Role, SegmentKind> = {
  system: 'instructions',
  developer: 'instructions',
  user: 'history',
  assistant: 'history',
  tool: 'tool',
};

/**
 * @param recordTurn the turn the source states, if any; history turns are numbered back from it.
 */
export type BlockHook = (index: number, text: string, blocks: PassageBlock[]) => PassageBlock[];

export function mapMessages(msgs: SourceMessage[], o: ResolvedImportOptions, recordTurn?: number, hook?: BlockHook): MappedMessages {
  const notes: MappedMessages['notes'] = [];
  const info: string[] = [];
  const explain: MessageExplain[] = [];
  const roles = msgs.map((m) => resolveRole(m.role, o));

  // The query message: configured index, else the last user message.
  let query = -1;
  if (o.queryMessage !== undefined) {
    query = o.queryMessage < 0 ? msgs.length + o.queryMessage : o.queryMessage;
    if (query < 0 || query >= msgs.length) {
      notes.push({ code: 'import-unmapped', message: `queryMessage ${o.queryMessage} is outside the ${msgs.length} messages; using the last user message` });
      query = -1;
    }
  }
  const queryBy = query >= 0 ? `message ${query} is the query (queryMessage setting)` : '';
  if (query < 0) for (let i = msgs.length - 1; i >= 0; i--) if (roles[i] === 'user') { query = i; break; }
  if (query < 0) notes.push({ code: 'import-unmapped', message: 'no user message: the record has no query segment' });

  // The current exchange: user messages right before the query (after the last assistant reply).
  let exchangeStart = query;
  while (exchangeStart > 0 && (roles[exchangeStart - 1] === 'user' || roles[exchangeStart - 1] === undefined)) exchangeStart--;

  // Exchange numbers for earlier messages: a user message after a non-user message opens a new exchange.
  const exchangeOf: number[] = [];
  let ex = 0;
  let prev: Role | undefined;
  for (let i = 0; i < msgs.length; i++) {
    const r = roles[i];
    if (query >= 0 && i >= exchangeStart) {
      exchangeOf.push(ex + 1);
      continue;
    }
    if (r === 'user' && prev !== 'user') ex++;
    if (r === 'assistant' && ex === 0) ex = 1;
    if (r) prev = r;
    exchangeOf.push(ex);
  }
  const inferredTurn = ex + 1;
  const turn = recordTurn ?? inferredTurn;
  const shift = recordTurn !== undefined && recordTurn >= inferredTurn ? recordTurn - inferredTurn : 0;
  if (recordTurn !== undefined && recordTurn < inferredTurn) {
    notes.push({ code: 'import-unmapped', message: `the source says turn ${recordTurn} but the messages hold ${inferredTurn - 1} earlier exchanges; history turns are numbered from 1` });
  }

  const segments: Segment[] = [];
  const used = new Set<string>();
  const uniqueId = (want: string): string => {
    let id = want;
    for (let k = 2; used.has(id); k++) id = `${want}~${k}`;
    if (id !== want) notes.push({ code: 'import-duplicate-id', message: `passage id "${want}" appears more than once; renamed to "${id}"` });
    used.add(id);
    return id;
  };
  // Reserve message-derived ids first so passage ids never take them.
  msgs.forEach((_, i) => used.add(`m${i}`));

  let messageNo = 0;
  let passageNo = 0;
  for (let i = 0; i < msgs.length; i++) {
    const m = msgs[i]!;
    const role = roles[i];
    for (const u of m.unmapped) notes.push({ code: 'import-unmapped', message: `message ${i} (${m.role}): ${u}` });
    if (!role) {
      notes.push({ code: 'import-unmapped', message: `message ${i}: role "${m.role}" is not one of ${ROLES.join(', ')} (add it to roleAliases); message skipped` });
      explain.push({ index: i, role: m.role, why: 'skipped: unknown role', segments: [] });
      continue;
    }
    if (m.text === undefined) {
      explain.push({ index: i, role: m.role, why: 'skipped: no text content', segments: [] });
      continue;
    }
    let kind: SegmentKind;
    let why: string;
    if (i === query) {
      kind = 'query';
      why = queryBy || 'last user message → query';
    } else if (o.roleKinds[role]) {
      kind = o.roleKinds[role]!;
      why = `${role} → ${kind} (roleKinds setting)`;
    } else if (role === 'user' && query >= 0 && i >= exchangeStart && i < query) {
      kind = 'query';
      why = 'user message in the current exchange (after the last assistant reply) → query';
    } else if (role === 'user' && query >= 0 && i > query) {
      kind = 'history';
      why = 'user message after the query → history';
    } else {
      kind = DEFAULT_KIND[role];
      why = role === 'system' || role === 'developer' ? `${role} → instructions` : role === 'tool' ? 'tool message → tool' : `earlier ${role} message → history (exchange ${exchangeOf[i]! + shift})`;
    }
    const msgTurn = kind === 'history' ? exchangeOf[i]! + shift : undefined;

    let blocks: PassageBlock[] = [];
    let by = '';
    if (o.passageRoles.includes(role) && m.text) {
      const found = findBlocks(m.text, o.splitter);
      if (found.error) notes.push({ code: 'import-bad-splitter', message: found.error });
      blocks = found.blocks;
      by = found.by;
      if (hook) {
        const n = blocks.length;
        blocks = hook(i, m.text, blocks);
        if (blocks.length > n) by = n ? `${by} + retrieval document text` : 'retrieval document text';
      }
    }
    const layout = layoutMessage(m.text, blocks, o.layout);
    for (const n of layout.notes) notes.push({ code: n.code, message: `message ${i}: ${n.message}` });
    const ex: MessageExplain = { index: i, role: m.role, message: messageNo, kind, why, segments: [] };
    if (blocks.length) ex.why += `; ${blocks.length} passage${blocks.length === 1 ? '' : 's'} found by ${by}`;
    let outside = 0;
    for (const piece of layout.pieces) {
      let seg: Segment;
      if (piece.blocks.length) {
        const b = piece.blocks[0]!;
        passageNo++;
        let want = b.id;
        if (want === undefined) {
          want = `p${passageNo}`;
          notes.push({ code: 'import-missing-id', message: `message ${i}: passage ${passageNo} has no id; named "${want}"` });
        }
        seg = { id: uniqueId(want), kind: 'passage', role, text: piece.text, rank: passageNo };
        if (b.score !== undefined) seg.score = b.score;
        if (b.source) seg.source = b.source;
        if (b.date) seg.date = b.date;
        if (piece.blocks.length > 1) seg.ids = piece.blocks.map((x, k) => x.id ?? `p${passageNo}.${k + 1}`);
      } else {
        const id = layout.pieces.length === 1 ? `m${i}` : uniqueId(`m${i}.${++outside}`);
        seg = { id, kind, role, text: piece.text };
        if (msgTurn !== undefined) seg.turn = msgTurn;
      }
      if (m.name) seg.name = m.name;
      seg.message = messageNo;
      segments.push(seg);
      ex.segments.push({ id: seg.id, kind: seg.kind, chars: seg.text.length, turn: seg.turn, ids: seg.ids as string[] | undefined });
    }
    explain.push(ex);
    messageNo++;
  }

  // Rank follows order unless every passage has a captured score: then higher score = better rank.
  const passages = segments.filter((s) => s.kind === 'passage');
  if (passages.length > 1 && passages.every((p) => typeof p.score === 'number')) {
    const order = [...passages].sort((a, b) => (b.score as number) - (a.score as number) || (a.rank as number) - (b.rank as number));
    order.forEach((p, k) => (p.rank = k + 1));
    info.push('every passage has a score: ranks follow the scores (highest = rank 1)');
  } else if (passages.some((p) => typeof p.score === 'number') && passages.some((p) => typeof p.score !== 'number')) {
    notes.push({ code: 'import-unmapped', message: 'only some passages have a score: ranks follow prompt order' });
  }
  for (const e of explain) for (const s of e.segments) {
    const seg = segments.find((x) => x.id === s.id)!;
    if (seg.rank !== undefined) s.rank = seg.rank;
    if (seg.score !== undefined) s.score = seg.score;
  }
  if (passages.length && !info.length) info.push('passage ranks follow prompt order');
  info.push(recordTurn !== undefined ? `turn ${turn} from the source` : `turn ${turn} inferred: 1 + ${turn - 1} earlier exchange(s) in the messages`);
  return { segments, explain, turn, notes, info };
}
