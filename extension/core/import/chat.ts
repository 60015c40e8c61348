/**
 * Chat-message logs: JSON Lines, one request per line, holding the request's `messages` and
 * optionally the reply, the reported usage, the model, a conversation id and a turn.
 *
 * Accepted places (first found wins):
 * - messages: `messages`, `contents` (Gemini: `parts`, role `model`), `input` (when an array), also under `request`
 * - system text beside the messages: `system` (string or text blocks), `systemInstruction` / `system_instruction`
 * - model: `model`, `request.model`, `response.model`
 * - reply: `reply`, `response` / `completion` / `output` (string), `response.choices[0].message.content`,
 *   `choices[0].message.content`, `response.content` (string or parts), `output_text`,
 *   `candidates[0].content.parts` (also under `response`)
 * - usage: `usage` / `usageMetadata` (also under `response`): `prompt_tokens|input_tokens|promptTokenCount` →
 *   `usage.prompt`, `completion_tokens|output_tokens|candidatesTokenCount` → `usage.completion`
 *   (all other usage fields are kept)
 * - reserve: `max_tokens|max_completion_tokens|max_output_tokens` (also under `request`)
 * - conversation: `conversation|conversation_id|conversationId|thread_id|session_id` (also under `metadata`)
 * - turn: `turn` (also under `metadata`)
 * - time: `time|timestamp|created_at` (string) or `created` (Unix seconds)
 */
import { parseTree, findNodeAtLocation } from 'jsonc-parser';
import { JOINER } from '../log/types';
import type { LogIssue, LogRecord, Segment } from '../log/types';
import { encodingForModel } from '../tokens/encoder';
import { mapMessages } from './messages';
import type { MessageExplain, SourceMessage } from './messages';
import { DEFAULT_RESERVE, DEFAULT_WINDOW } from './options';
import type { ResolvedImportOptions } from './options';

type Json = Record<string, unknown>;

/** Why each record-level value is what it is; the inspect output prints this. */
export interface RecordExplain {
  line: number;
  /** e.g. `chat line 3` or `span 1a2b… (trace 9f…)` */
  source: string;
  conversation: string;
  turn: string;
  model: string;
  window: string;
  reserve: string;
  encoding: string;
  messages: MessageExplain[];
  info: string[];
}

export interface ImportedRecord {
  record: LogRecord;
  explain: RecordExplain;
}

export const isObject = (v: unknown): v is Json => typeof v === 'object' && v !== null && !Array.isArray(v);
const str = (v: unknown): string | undefined => (typeof v === 'string' && v !== '' ? v : undefined);
const int = (v: unknown): number | undefined => (typeof v === 'number' && Number.isInteger(v) && v >= 0 ? v : typeof v === 'string' && /^\d+$/.test(v) ? Number(v) : undefined);

function first<T>(...vals: Array<T | undefined>): T | undefined {
  for (const v of vals) if (v !== undefined) return v;
  return undefined;
}

/** 1-based column of the value at `path` in the line, or 1. Only used on the issue path. */
export function columnAt(text: string, path: Array<string | number>, tree?: ReturnType<typeof parseTree>): number {
  const root = tree ?? parseTree(text);
  if (!root) return 1;
  for (let n = path.length; n >= 0; n--) {
    const node = findNodeAtLocation(root, path.slice(0, n));
    if (node) return node.offset + 1;
  }
  return 1;
}

const TEXT_PART_TYPES = new Set(['text', 'input_text', 'output_text']);

/**
 * Message content → text. Strings are taken as they are; arrays of parts keep their text parts,
 * joined with JOINER (the chat APIs do not publish how parts are concatenated, so Spillway renders
 * them the way it renders segments of one message); every other part is reported as not mapped.
 */
export function contentText(content: unknown, unmapped: string[]): string | undefined {
  if (typeof content === 'string') return content;
  if (content === null || content === undefined) return undefined;
  if (Array.isArray(content)) {
    const texts: string[] = [];
    content.forEach((p, k) => {
      if (typeof p === 'string') texts.push(p);
      else if (isObject(p) && TEXT_PART_TYPES.has(String(p['type'])) && typeof (p['text'] ?? p['content']) === 'string') texts.push((p['text'] ?? p['content']) as string);
      else if (isObject(p) && p['type'] === undefined && typeof p['text'] === 'string') texts.push(p['text']);
      else unmapped.push(`content part ${k} of type "${isObject(p) ? String(p['type']) : typeof p}" is not text and is not counted (its token cost depends on the provider)`);
    });
    return texts.length ? texts.join(JOINER) : undefined;
  }
  unmapped.push(`content of type ${typeof content} is not text and is not counted`);
  return undefined;
}

function chatMessages(raw: unknown[]): SourceMessage[] {
  return raw.map((m, i) => {
    if (!isObject(m)) return { role: '?', text: undefined, unmapped: [`message ${i} is not an object`] };
    const unmapped: string[] = [];
    // `parts` is the Gemini spelling of `content`.
    const text = contentText(m['content'] ?? m['parts'], unmapped);
    if (Array.isArray(m['tool_calls']) && m['tool_calls'].length) unmapped.push(`${m['tool_calls'].length} tool call(s) are not counted: their rendering into the prompt is not published`);
    if (isObject(m['function_call'])) unmapped.push('function_call is not counted: its rendering into the prompt is not published');
    const out: SourceMessage = { role: str(m['role']) ?? '?', text, unmapped };
    if (typeof m['name'] === 'string' && m['name']) out.name = m['name'];
    return out;
  });
}

function replyText(o: Json): string | undefined {
  const direct = first(str(o['reply']), str(o['response']), str(o['completion']), str(o['output']), str(o['output_text']));
  if (direct !== undefined) return direct;
  const resp = isObject(o['response']) ? o['response'] : o;
  const choices = resp['choices'];
  if (Array.isArray(choices) && isObject(choices[0])) {
    const c = choices[0];
    if (isObject(c['message'])) return contentText(c['message']['content'], []);
    if (typeof c['text'] === 'string') return c['text'];
  }
  const cands = resp['candidates'];
  if (Array.isArray(cands) && isObject(cands[0]) && isObject(cands[0]['content'])) return contentText(cands[0]['content']['parts'], []);
  if (resp !== o && resp['content'] !== undefined) return contentText(resp['content'], []);
  if (isObject(o['reply'])) return contentText(o['reply']['content'], []);
  return undefined;
}

const USAGE_PROMPT = ['prompt_tokens', 'input_tokens', 'promptTokenCount'];
const USAGE_COMPLETION = ['completion_tokens', 'output_tokens', 'candidatesTokenCount'];

export function mapUsage(u: Json): LogRecord['usage'] {
  const out: NonNullable<LogRecord['usage']> = {};
  for (const [k, v] of Object.entries(u)) {
    if (USAGE_PROMPT.includes(k) && int(v) !== undefined && out.prompt === undefined) out.prompt = int(v);
    else if (USAGE_COMPLETION.includes(k) && int(v) !== undefined && out.completion === undefined) out.completion = int(v);
    else out[k] = v;
  }
  return out;
}

/** Builds the record-level fields shared by both importers. */
export function buildModel(
  name: string | undefined,
  maxTokens: number | undefined,
  o: ResolvedImportOptions,
  notes: Array<{ code: string; message: string }>,
): { model: LogRecord['model']; why: Pick<RecordExplain, 'model' | 'window' | 'reserve' | 'encoding'> } {
  const modelName = name ?? o.model ?? 'unknown';
  const whyModel = name ? `"${modelName}" from the source` : o.model ? `"${modelName}" from the model setting` : '"unknown": the source names no model';
  const window = o.window ?? DEFAULT_WINDOW;
  const whyWindow = o.window !== undefined ? `${window} from the window setting` : `${window}: default (logs do not record the context window; set the window option)`;
  let reserve = maxTokens ?? o.reserve ?? DEFAULT_RESERVE;
  let whyReserve = maxTokens !== undefined ? `${reserve} from the request's max tokens` : o.reserve !== undefined ? `${reserve} from the reserve setting` : `${reserve}: default (the request gives no max tokens)`;
  if (reserve >= window) {
    notes.push({ code: 'import-unmapped', message: `reserve ${reserve} is not smaller than the window ${window}; using ${Math.min(DEFAULT_RESERVE, window - 1)}` });
    reserve = Math.min(DEFAULT_RESERVE, window - 1);
    whyReserve = `${reserve}: the source value did not fit the window`;
  }
  const model: LogRecord['model'] = { name: modelName, window, reserve };
  let whyEnc: string;
  const known = encodingForModel(modelName);
  if (o.encoding) {
    model.encoding = o.encoding;
    whyEnc = `${o.encoding} from the encoding setting`;
  } else if (known) {
    whyEnc = `${known} from the model name`;
  } else {
    model.encoding = 'o200k_base';
    whyEnc = `o200k_base assumed: no encoding is known for "${modelName}" (set the encoding option)`;
  }
  return { model, why: { model: whyModel, window: whyWindow, reserve: whyReserve, encoding: whyEnc } };
}

/** FNV-1a 32-bit (Fowler–Noll–Vo), hex: a short stable id for inferred conversations. */
export function fnv1a(s: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(16).padStart(8, '0');
}

/**
 * Conversation id when the source has none: `chat-` + FNV-1a of the first system/developer text and
 * the first user text. Requests of one conversation resend the same opening, so they share the id.
 */
export function inferConversation(msgs: SourceMessage[]): string {
  const sys = msgs.find((m) => m.role === 'system' || m.role === 'developer')?.text ?? '';
  const user = msgs.find((m) => m.role === 'user')?.text ?? '';
  return `chat-${fnv1a(sys + '\u0000' + user)}`;
}

export function sentAllKept(segments: Segment[]): LogRecord['sent'] {
  return segments.map((s) => ({ id: s.id, fate: 'kept' as const }));
}

function timeOf(o: Json): string | undefined {
  const s = first(str(o['time']), str(o['timestamp']), str(o['created_at']));
  if (s) return s;
  const c = o['created'];
  if (typeof c === 'number' && Number.isFinite(c)) return new Date(c * 1000).toISOString();
  return undefined;
}

const CONVERSATION_KEYS = ['conversation', 'conversation_id', 'conversationId', 'thread_id', 'session_id'];
const CONSUMED = new Set([
  'messages', 'contents', 'system', 'systemInstruction', 'system_instruction', 'request', 'response', 'model', 'reply', 'completion', 'output', 'output_text', 'choices', 'usage',
  'max_tokens', 'max_completion_tokens', 'max_output_tokens', 'turn', 'usageMetadata', 'candidates', 'time', 'timestamp', 'created_at', 'created', 'input',
  ...CONVERSATION_KEYS,
]);

/** One chat log line → one record (or issues). */
export function importChatLine(text: string, line: number, o: ResolvedImportOptions): { result?: ImportedRecord; issues: LogIssue[] } {
  const issues: LogIssue[] = [];
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    const pos = /position (\d+)/.exec((e as Error).message);
    return { issues: [{ line, column: pos ? Number(pos[1]) + 1 : 1, code: 'bad-json', message: `bad JSON: ${(e as Error).message}` }] };
  }
  if (!isObject(value)) return { issues: [{ line, column: 1, code: 'import-skipped', message: 'a chat log line must be a JSON object; line skipped' }] };
  const req = isObject(value['request']) ? value['request'] : value;
  const key = ['messages', 'contents', 'input'].find((k) => Array.isArray(req[k])) ?? (req !== value ? ['messages', 'contents'].find((k) => Array.isArray(value[k])) : undefined);
  if (!key) return { issues: [{ line, column: 1, code: 'import-skipped', message: 'no "messages" array: not a chat request; line skipped' }] };
  const holder = Array.isArray(req[key]) ? req : value;
  const msgPath: Array<string | number> = holder === value ? [key] : ['request', key];

  const meta = isObject(value['metadata']) ? value['metadata'] : {};
  const msgs = chatMessages(holder[key] as unknown[]);
  // System text given beside the messages (Anthropic `system`, Gemini `systemInstruction`) opens the prompt.
  const sysKey = ['system', 'systemInstruction', 'system_instruction'].find((k) => holder[k] !== undefined && holder[k] !== null);
  if (sysKey) {
    const unmapped: string[] = [];
    const sv = holder[sysKey];
    const text = contentText(isObject(sv) ? sv['parts'] ?? sv['content'] ?? sv['text'] : sv, unmapped);
    msgs.unshift({ role: 'system', text, unmapped });
  }
  const shift = sysKey ? 1 : 0;
  const turnIn = first(int(value['turn']), int(meta['turn']));
  const mapped = mapMessages(msgs, o, turnIn !== undefined && turnIn > 0 ? turnIn : undefined);
  const notes = [...mapped.notes];

  let conversation: string | undefined;
  let whyConv = '';
  for (const src of [value, meta]) {
    for (const k of CONVERSATION_KEYS) {
      const v = src[k];
      if (conversation === undefined && (typeof v === 'string' || typeof v === 'number') && String(v) !== '') {
        conversation = String(v);
        whyConv = `"${conversation}" from ${src === meta ? 'metadata.' : ''}${k}`;
      }
    }
  }
  if (conversation === undefined) {
    conversation = inferConversation(msgs);
    whyConv = `"${conversation}" inferred: hash of the first system and first user message (no conversation id in the line)`;
  }

  const maxTokens = first(int(req['max_tokens']), int(req['max_completion_tokens']), int(req['max_output_tokens']), int(value['max_tokens']));
  const modelName = first(str(req['model']), str(value['model']), isObject(value['response']) ? str(value['response']['model']) : undefined);
  const { model, why } = buildModel(modelName, maxTokens, o, notes);

  const record: LogRecord = { v: 1, conversation, turn: mapped.turn, model, segments: mapped.segments };
  const time = timeOf(value);
  if (time) record.time = time;
  if (o.framing) record.framing = o.framing;
  const reply = replyText(value);
  if (reply !== undefined) record.reply = reply;
  const resp = isObject(value['response']) ? value['response'] : {};
  const usage = [value['usage'], resp['usage'], value['usageMetadata'], resp['usageMetadata']].find(isObject);
  if (usage) record.usage = mapUsage(usage);
  if (o.sent === 'all-kept') record.sent = sentAllKept(mapped.segments);
  const extra: Json = {};
  for (const [k, v] of Object.entries(value)) if (!CONSUMED.has(k)) extra[k] = v;
  if (req !== value) for (const [k, v] of Object.entries(req)) if (!CONSUMED.has(k)) extra[`request.${k}`] = v;
  record.import = { from: 'chat', line };
  if (Object.keys(extra).length) record.chat = extra;

  let tree: ReturnType<typeof parseTree> | undefined; // parsed once, only when a note needs a column
  for (const n of notes) {
    const m = /^message (\d+)/.exec(n.message);
    const at = m ? Number(m[1]) - shift : undefined;
    const path = at === undefined ? undefined : at < 0 ? [...msgPath.slice(0, -1), sysKey!] : [...msgPath, at];
    if (path && !tree) tree = parseTree(text);
    issues.push({ line, column: path ? columnAt(text, path, tree) : 1, code: n.code, message: n.message });
  }
  const explain: RecordExplain = {
    line,
    source: `chat line ${line}`,
    conversation: whyConv,
    turn: mapped.info.at(-1)!,
    ...why,
    messages: mapped.explain,
    info: mapped.info.slice(0, -1),
  };
  return { result: { record, explain }, issues };
}
