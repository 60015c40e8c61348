/**
 * OpenTelemetry traces in OTLP/JSON, as the collector's file exporter writes them: one
 * `{"resourceSpans":[…]}` object per line (a single pretty-printed document is accepted too).
 * Spans follow the OpenTelemetry GenAI semantic conventions (semantic-conventions-genai v0.1.0, which
 * continues semantic-conventions v1.37–v1.41); the attributes of v1.36 and earlier are read as well.
 * See docs/importers.md for the full attribute list.
 */
import { parseTree } from 'jsonc-parser';
import { JOINER } from '../log/types';
import type { LogIssue, LogRecord } from '../log/types';
import { buildModel, contentText, isObject, mapUsage, sentAllKept } from './chat';
import type { ImportedRecord, RecordExplain } from './chat';
import { mapMessages } from './messages';
import type { SourceMessage } from './messages';
import type { ResolvedImportOptions } from './options';
import type { PassageBlock } from './split';

type Json = Record<string, unknown>;

export interface FlatSpan {
  traceId: string;
  spanId: string;
  parentSpanId?: string;
  name: string;
  kind?: unknown;
  start: bigint;
  end: bigint;
  attrs: Json;
  events: Array<{ name: string; time: bigint; attrs: Json }>;
  resource: Json;
  scope?: string;
  status?: unknown;
  /** Source line of the span (of its containing line for one-object-per-line files). */
  line: number;
}

/** OTLP/JSON AnyValue → plain JSON value (64-bit ints arrive as strings; kept as numbers when safe). */
export function anyValue(v: unknown): unknown {
  if (!isObject(v)) return v;
  if ('stringValue' in v) return v['stringValue'];
  if ('boolValue' in v) return v['boolValue'];
  if ('intValue' in v) {
    const n = Number(v['intValue']);
    return Number.isSafeInteger(n) ? n : String(v['intValue']);
  }
  if ('doubleValue' in v) return Number(v['doubleValue']);
  if ('bytesValue' in v) return v['bytesValue'];
  if ('arrayValue' in v) {
    const a = v['arrayValue'];
    return isObject(a) && Array.isArray(a['values']) ? a['values'].map(anyValue) : [];
  }
  if ('kvlistValue' in v) {
    const a = v['kvlistValue'];
    return isObject(a) && Array.isArray(a['values']) ? attributes(a['values']) : {};
  }
  return null;
}

export function attributes(list: unknown): Json {
  const out: Json = {};
  if (!Array.isArray(list)) return out;
  for (const kv of list) if (isObject(kv) && typeof kv['key'] === 'string') out[kv['key']] = anyValue(kv['value']);
  return out;
}

function nanos(v: unknown): bigint {
  if (typeof v === 'string' && /^\d+$/.test(v)) return BigInt(v);
  if (typeof v === 'number' && Number.isFinite(v)) return BigInt(Math.trunc(v));
  return 0n;
}

/** Collects the spans of one OTLP/JSON `TracesData` object. `lineOf` gives a span's source line. */
export function flattenTraces(doc: unknown, lineOf: (resource: number, scope: number, span: number) => number): FlatSpan[] {
  const out: FlatSpan[] = [];
  if (!isObject(doc) || !Array.isArray(doc['resourceSpans'])) return out;
  doc['resourceSpans'].forEach((rs, ri) => {
    if (!isObject(rs)) return;
    const resource = isObject(rs['resource']) ? attributes(rs['resource']['attributes']) : {};
    const scopes = Array.isArray(rs['scopeSpans']) ? rs['scopeSpans'] : Array.isArray(rs['instrumentationLibrarySpans']) ? rs['instrumentationLibrarySpans'] : [];
    scopes.forEach((ss, si) => {
      if (!isObject(ss) || !Array.isArray(ss['spans'])) return;
      const sc = isObject(ss['scope']) ? ss['scope'] : isObject(ss['instrumentationLibrary']) ? ss['instrumentationLibrary'] : undefined;
      ss['spans'].forEach((sp, pi) => {
        if (!isObject(sp)) return;
        out.push({
          traceId: String(sp['traceId'] ?? ''),
          spanId: String(sp['spanId'] ?? ''),
          parentSpanId: sp['parentSpanId'] ? String(sp['parentSpanId']) : undefined,
          name: String(sp['name'] ?? ''),
          kind: sp['kind'],
          start: nanos(sp['startTimeUnixNano']),
          end: nanos(sp['endTimeUnixNano']),
          attrs: attributes(sp['attributes']),
          events: Array.isArray(sp['events'])
            ? sp['events'].filter(isObject).map((e) => ({ name: String(e['name'] ?? ''), time: nanos(e['timeUnixNano']), attrs: attributes(e['attributes']) }))
            : [],
          resource,
          scope: sc && typeof sc['name'] === 'string' ? sc['name'] : undefined,
          status: sp['status'],
          line: lineOf(ri, si, pi),
        });
      });
    });
  });
  return out;
}

/** Line of each span in a pretty-printed single document (only used for that shape). */
export function spanLinesOfDocument(text: string): (r: number, s: number, p: number) => number {
  const root = parseTree(text);
  const lineStarts: number[] = [0];
  for (let i = text.indexOf('\n'); i !== -1; i = text.indexOf('\n', i + 1)) lineStarts.push(i + 1);
  const lineAt = (offset: number): number => {
    let lo = 0;
    let hi = lineStarts.length - 1;
    while (lo < hi) {
      const mid = (lo + hi + 1) >> 1;
      if (lineStarts[mid]! <= offset) lo = mid;
      else hi = mid - 1;
    }
    return lo + 1;
  };
  const child = (node: ReturnType<typeof parseTree>, key: string | number) => {
    if (!node) return undefined;
    if (typeof key === 'number') return node.type === 'array' ? node.children?.[key] : undefined;
    const prop = node.children?.find((c) => c.type === 'property' && c.children?.[0]?.value === key);
    return prop?.children?.[1];
  };
  return (r, s, p) => {
    const rs = child(child(root, 'resourceSpans'), r);
    const ss = child(child(rs, 'scopeSpans') ?? child(rs, 'instrumentationLibrarySpans'), s);
    const sp = child(child(ss, 'spans'), p);
    return sp ? lineAt(sp.offset) : 1;
  };
}

// ---- GenAI conventions -------------------------------------------------------------------------

const INFERENCE_OPS = new Set(['chat', 'text_completion', 'generate_content']);
/** Attributes read into the record; everything else is kept under `otel.attributes`. */
const CONSUMED = new Set([
  'gen_ai.operation.name',
  'gen_ai.request.model',
  'gen_ai.response.model',
  'gen_ai.request.max_tokens',
  'gen_ai.conversation.id',
  'gen_ai.system_instructions',
  'gen_ai.input.messages',
  'gen_ai.output.messages',
  'gen_ai.prompt',
  'gen_ai.completion',
  'gen_ai.usage.input_tokens',
  'gen_ai.usage.output_tokens',
  'gen_ai.usage.prompt_tokens',
  'gen_ai.usage.completion_tokens',
]);
const LEGACY_MESSAGE_EVENTS: Record<string, string> = {
  'gen_ai.system.message': 'system',
  'gen_ai.user.message': 'user',
  'gen_ai.assistant.message': 'assistant',
  'gen_ai.tool.message': 'tool',
};

/** Structured attributes may be recorded as JSON strings; parse those. */
function structured(v: unknown): unknown {
  if (typeof v !== 'string') return v;
  const t = v.trim();
  if (!(t.startsWith('[') || t.startsWith('{'))) return v;
  try {
    return JSON.parse(t);
  } catch {
    return v;
  }
}

/** Parts of a conventions message (`{type:"text",content}` …) → text, reporting other parts. */
function partsText(parts: unknown, unmapped: string[]): string | undefined {
  if (!Array.isArray(parts)) return contentText(parts, unmapped);
  const texts: string[] = [];
  parts.forEach((p, k) => {
    if (!isObject(p)) return void unmapped.push(`part ${k} is not an object`);
    const type = String(p['type']);
    if (type === 'text' && typeof p['content'] === 'string') texts.push(p['content']);
    else if (type === 'tool_call_response') {
      const r = p['response'] ?? p['result'];
      if (typeof r === 'string') texts.push(r);
      else {
        texts.push(JSON.stringify(r));
        unmapped.push(`part ${k}: tool_call_response result is structured; counted as its compact JSON text (the application's own serialisation may differ)`);
      }
    } else if (type === 'tool_call') unmapped.push(`part ${k}: tool_call "${String(p['name'])}" is not counted (its rendering into the prompt is not published)`);
    else unmapped.push(`part ${k} of type "${type}" is not text and is not counted`);
  });
  return texts.length ? texts.join(JOINER) : undefined;
}

function conventionMessages(v: unknown): SourceMessage[] | undefined {
  const arr = structured(v);
  if (!Array.isArray(arr)) return undefined;
  return arr.map((m, i) => {
    if (!isObject(m)) return { role: '?', text: undefined, unmapped: [`message ${i} is not an object`] };
    const unmapped: string[] = [];
    const text = 'parts' in m ? partsText(m['parts'], unmapped) : contentText(m['content'], unmapped);
    const out: SourceMessage = { role: String(m['role'] ?? '?'), text, unmapped };
    if (typeof m['name'] === 'string' && m['name']) out.name = m['name'];
    return out;
  });
}

/** Flattened `gen_ai.prompt.0.role` / `gen_ai.prompt.0.content` (pre-1.28 instrumentations). */
function flattened(attrs: Json, prefix: string, consumed: Set<string>): SourceMessage[] | undefined {
  const rows = new Map<number, Json>();
  for (const [k, v] of Object.entries(attrs)) {
    const m = new RegExp(`^${prefix.replace(/\./g, '\\.')}\\.(\\d+)\\.(\\w+)$`).exec(k);
    if (!m) continue;
    consumed.add(k);
    const i = Number(m[1]);
    if (!rows.has(i)) rows.set(i, {});
    rows.get(i)![m[2]!] = v;
  }
  if (!rows.size) return undefined;
  return [...rows.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([, r]) => ({ role: String(r['role'] ?? 'user'), text: typeof r['content'] === 'string' ? r['content'] : undefined, unmapped: [] }));
}

function inputMessages(s: FlatSpan, consumed: Set<string>): { msgs: SourceMessage[]; from: string } | undefined {
  const sys = structured(s.attrs['gen_ai.system_instructions']);
  const head: SourceMessage[] = [];
  if (sys !== undefined) {
    const unmapped: string[] = [];
    const text = typeof sys === 'string' ? sys : partsText(sys, unmapped);
    head.push({ role: 'system', text, unmapped });
  }
  const modern = conventionMessages(s.attrs['gen_ai.input.messages']);
  if (modern) return { msgs: [...head, ...modern], from: 'gen_ai.input.messages' + (head.length ? ' + gen_ai.system_instructions' : '') };
  const prompt = s.attrs['gen_ai.prompt'];
  const legacy = conventionMessages(prompt);
  if (legacy) return { msgs: [...head, ...legacy], from: 'gen_ai.prompt (JSON messages)' };
  if (typeof prompt === 'string') return { msgs: [...head, { role: 'user', text: prompt, unmapped: [] }], from: 'gen_ai.prompt (plain text, taken as one user message)' };
  const flat = flattened(s.attrs, 'gen_ai.prompt', consumed);
  if (flat) return { msgs: [...head, ...flat], from: 'gen_ai.prompt.N.role/content' };
  const evs = s.events.filter((e) => e.name in LEGACY_MESSAGE_EVENTS || e.name === 'gen_ai.content.prompt');
  if (evs.length) {
    const msgs: SourceMessage[] = [];
    for (const e of evs) {
      if (e.name === 'gen_ai.content.prompt') {
        const inner = conventionMessages(e.attrs['gen_ai.prompt']);
        if (inner) msgs.push(...inner);
        else if (typeof e.attrs['gen_ai.prompt'] === 'string') msgs.push({ role: 'user', text: e.attrs['gen_ai.prompt'], unmapped: [] });
        continue;
      }
      const unmapped: string[] = [];
      const body = structured(e.attrs['content'] ?? e.attrs['gen_ai.event.content'] ?? e.attrs['body']);
      const text = isObject(body) ? contentText(body['content'], unmapped) : contentText(body, unmapped);
      msgs.push({ role: LEGACY_MESSAGE_EVENTS[e.name]!, text, unmapped });
    }
    return { msgs: [...head, ...msgs], from: 'span events gen_ai.*.message / gen_ai.content.prompt' };
  }
  return head.length ? { msgs: head, from: 'gen_ai.system_instructions' } : undefined;
}

function outputText(s: FlatSpan, consumed: Set<string>): string | undefined {
  const out = structured(s.attrs['gen_ai.output.messages']);
  if (Array.isArray(out) && isObject(out[0])) return partsText(out[0]['parts'] ?? out[0]['content'], []);
  const legacy = conventionMessages(s.attrs['gen_ai.completion']);
  if (legacy?.[0]) return legacy[0].text;
  if (typeof s.attrs['gen_ai.completion'] === 'string') return s.attrs['gen_ai.completion'];
  const flat = flattened(s.attrs, 'gen_ai.completion', consumed);
  if (flat?.[0]) return flat[0].text;
  for (const e of s.events) {
    if (e.name === 'gen_ai.choice') {
      const body = structured(e.attrs['message'] ?? e.attrs['gen_ai.event.content'] ?? e.attrs['body']);
      if (isObject(body)) return contentText(isObject(body['message']) ? body['message']['content'] : body['content'], []);
      if (typeof body === 'string') return body;
    }
    if (e.name === 'gen_ai.content.completion' && typeof e.attrs['gen_ai.completion'] === 'string') return e.attrs['gen_ai.completion'];
  }
  return undefined;
}

export interface RetrievedDoc {
  id: string;
  score?: number;
  text?: string;
  source?: string;
  span: string;
}

const DOC_TEXT_KEYS = ['content', 'text', 'page_content', 'document'];

function docsFrom(v: unknown, span: FlatSpan): RetrievedDoc[] | undefined {
  let arr = structured(v);
  if (isObject(arr) && Array.isArray(arr['documents'])) arr = arr['documents'];
  if (!Array.isArray(arr)) return undefined;
  const source = typeof span.attrs['gen_ai.data_source.id'] === 'string' ? span.attrs['gen_ai.data_source.id'] : undefined;
  const docs: RetrievedDoc[] = [];
  arr.forEach((d, k) => {
    if (!isObject(d)) return;
    const key = DOC_TEXT_KEYS.find((x) => typeof d[x] === 'string');
    const id = d['id'] !== undefined ? String(d['id']) : undefined;
    if (id === undefined && !key) return;
    const doc: RetrievedDoc = { id: id ?? `${span.spanId}-${k + 1}`, span: span.spanId };
    if (typeof d['score'] === 'number') doc.score = d['score'];
    if (key) doc.text = d[key] as string;
    const src = typeof d['source'] === 'string' ? d['source'] : typeof d['uri'] === 'string' ? d['uri'] : source;
    if (src) doc.source = src;
    docs.push(doc);
  });
  return docs;
}

export type SpanRole = 'inference' | 'retrieval' | 'tool' | 'other-genai' | 'other';

export function spanRole(s: FlatSpan): SpanRole {
  const op = s.attrs['gen_ai.operation.name'];
  if (op === 'retrieval' || s.attrs['gen_ai.retrieval.documents'] !== undefined) return 'retrieval';
  if (op === 'execute_tool') return 'tool';
  if (typeof op === 'string' && INFERENCE_OPS.has(op)) return 'inference';
  if (op === undefined && (s.attrs['gen_ai.input.messages'] !== undefined || s.attrs['gen_ai.prompt'] !== undefined || s.attrs['gen_ai.prompt.0.content'] !== undefined || s.events.some((e) => e.name in LEGACY_MESSAGE_EVENTS))) return 'inference';
  if (op !== undefined || Object.keys(s.attrs).some((k) => k.startsWith('gen_ai.'))) return 'other-genai';
  return 'other';
}

const cmp = (a: bigint, b: bigint): number => (a < b ? -1 : a > b ? 1 : 0);
const iso = (ns: bigint): string | undefined => (ns > 0n ? new Date(Number(ns / 1_000_000n)).toISOString() : undefined);

/** All spans of the file → records, one per inference span, each with the retrieval of its trace. */
export function importSpans(spans: FlatSpan[], o: ResolvedImportOptions): { results: Array<ImportedRecord & { line: number }>; issues: LogIssue[] } {
  const issues: LogIssue[] = [];
  const byTrace = new Map<string, FlatSpan[]>();
  const seen = new Set<string>();
  for (const s of spans) {
    // Exporters may write a span twice (e.g. after a retried batch): keep the first copy.
    const key = `${s.traceId}/${s.spanId}`;
    if (s.spanId && seen.has(key)) {
      issues.push({ line: s.line, column: 1, code: 'import-duplicate-span', message: `span ${s.spanId} of trace ${s.traceId} appears again; the first copy is used` });
      continue;
    }
    seen.add(key);
    const role = spanRole(s);
    if (role === 'other') continue;
    if (role === 'other-genai') {
      issues.push({ line: s.line, column: 1, code: 'import-skipped', message: `span ${s.spanId} "${s.name}": operation "${String(s.attrs['gen_ai.operation.name'] ?? '?')}" is not a model call or retrieval; not imported` });
      continue;
    }
    let list = byTrace.get(s.traceId);
    if (!list) byTrace.set(s.traceId, (list = []));
    list.push(s);
  }
  const results: Array<ImportedRecord & { line: number }> = [];
  for (const [traceId, list] of byTrace) {
    // Files list spans in export order, not start order: sort by start time.
    list.sort((a, b) => cmp(a.start, b.start) || a.line - b.line);
    const inferences = list.filter((s) => spanRole(s) === 'inference');
    if (!inferences.length) {
      for (const s of list) issues.push({ line: s.line, column: 1, code: 'import-skipped', message: `span ${s.spanId} "${s.name}": trace ${traceId} has no model-call span to attach this ${spanRole(s)} span to` });
      continue;
    }
    inferences.forEach((inf, k) => {
      const after = k === 0 ? undefined : inferences[k - 1]!.start;
      const retrievals = list.filter((s) => (spanRole(s) === 'retrieval' || spanRole(s) === 'tool') && s.start <= inf.start && (after === undefined || s.start >= after));
      const r = importInference(inf, retrievals, o);
      issues.push(...r.issues);
      if (r.result) results.push({ ...r.result, line: inf.line });
    });
    for (const s of list) {
      if ((spanRole(s) === 'retrieval' || spanRole(s) === 'tool') && s.start > inferences.at(-1)!.start) {
        issues.push({ line: s.line, column: 1, code: 'import-skipped', message: `span ${s.spanId} "${s.name}" starts after the last model call of trace ${traceId}; its results did not reach a prompt and are not imported` });
      }
    }
  }
  results.sort((a, b) => a.line - b.line);
  issues.sort((a, b) => a.line - b.line);
  return { results, issues };
}

function importInference(s: FlatSpan, retrievals: FlatSpan[], o: ResolvedImportOptions): { result?: ImportedRecord; issues: LogIssue[] } {
  const issues: LogIssue[] = [];
  const at = (code: string, message: string): void => void issues.push({ line: s.line, column: 1, code, message: `span ${s.spanId}: ${message}` });
  const consumed = new Set(CONSUMED);
  const input = inputMessages(s, consumed);
  if (!input) {
    const raw = s.attrs['gen_ai.input.messages'];
    if (typeof raw === 'string') at('import-skipped', `gen_ai.input.messages is a string that is not a JSON message list; not imported`);
    else at('import-skipped', `"${s.name}" records no input messages (gen_ai.input.messages is opt-in content capture); not imported`);
    return { issues };
  }
  // Retrieval documents: by id against the passages the splitter finds, else by their text in a message.
  const docs: RetrievedDoc[] = [];
  const docSpans: string[] = [];
  for (const r of retrievals) {
    const d = docsFrom(r.attrs['gen_ai.retrieval.documents'], r) ?? (spanRole(r) === 'tool' ? docsFrom(r.attrs['gen_ai.tool.call.result'], r) : undefined);
    if (d) {
      docs.push(...d);
      docSpans.push(`${r.spanId} "${r.name}" (${d.length} document${d.length === 1 ? '' : 's'})`);
    } else if (spanRole(r) === 'retrieval') {
      at('import-unmapped', `retrieval span ${r.spanId} "${r.name}" has no gen_ai.retrieval.documents; its results cannot be matched`);
    }
  }
  const matched = new Set<RetrievedDoc>();
  const adopted = new Set<PassageBlock>();
  const hook = (_i: number, text: string, blocks: PassageBlock[]): PassageBlock[] => {
    const out = [...blocks];
    for (const d of docs) {
      if (matched.has(d)) continue;
      const b = out.find((x) => x.id === d.id);
      if (b) {
        adopted.add(b);
        if (b.score === undefined && d.score !== undefined) b.score = d.score;
        if (!b.source && d.source) b.source = d.source;
        matched.add(d);
        continue;
      }
      if (!d.text) continue;
      let from = 0;
      for (;;) {
        const p = text.indexOf(d.text, from);
        if (p === -1) break;
        const end = p + d.text.length;
        // The document is the text of a block the splitter found under another id (e.g. `[1]`): adopt it.
        const holder = out.find((x) => x.start <= p && end <= x.end && !adopted.has(x));
        if (holder) {
          holder.id = d.id;
          if (holder.score === undefined && d.score !== undefined) holder.score = d.score;
          if (!holder.source && d.source) holder.source = d.source;
          adopted.add(holder);
          matched.add(d);
          break;
        }
        if (!out.some((x) => p < x.end && end > x.start)) {
          out.push({ start: p, end, innerStart: p, innerEnd: end, id: d.id, score: d.score, source: d.source });
          matched.add(d);
          break;
        }
        from = p + 1;
      }
    }
    return out.sort((a, b) => a.start - b.start);
  };
  const mapped = mapMessages(input.msgs, o, undefined, hook);
  for (const n of mapped.notes) at(n.code, n.message);
  for (const d of docs) {
    if (!matched.has(d)) at('import-unmapped', `retrieval document "${d.id}" (span ${d.span}) ${d.text ? 'text was not found in the prompt' : 'has no text and no passage with that id is in the prompt'}; not added`);
  }
  const passages = mapped.segments.filter((x) => x.kind === 'passage').length;
  if (!retrievals.length && !passages) at('import-no-retrieval', `trace ${s.traceId} has no retrieval or tool span before this model call; the record has no passages`);

  const attrs = s.attrs;
  const conv = typeof attrs['gen_ai.conversation.id'] === 'string' ? attrs['gen_ai.conversation.id'] : undefined;
  const maxTokens = typeof attrs['gen_ai.request.max_tokens'] === 'number' ? attrs['gen_ai.request.max_tokens'] : undefined;
  const modelName = typeof attrs['gen_ai.request.model'] === 'string' ? attrs['gen_ai.request.model'] : typeof attrs['gen_ai.response.model'] === 'string' ? attrs['gen_ai.response.model'] : undefined;
  const notes: Array<{ code: string; message: string }> = [];
  const { model, why } = buildModel(modelName, maxTokens, o, notes);
  for (const n of notes) at(n.code, n.message);

  const record: LogRecord = { v: 1, conversation: conv ?? `trace-${s.traceId}`, turn: mapped.turn, model, segments: mapped.segments };
  const time = iso(s.start);
  if (time) record.time = time;
  if (o.framing) record.framing = o.framing;
  const reply = outputText(s, consumed);
  if (reply !== undefined) record.reply = reply;
  const usage: Json = {};
  for (const [k, v] of Object.entries(attrs)) {
    if (!k.startsWith('gen_ai.usage.')) continue;
    consumed.add(k);
    usage[k.slice('gen_ai.usage.'.length)] = v;
  }
  if (Object.keys(usage).length) record.usage = mapUsage(usage);
  if (o.sent === 'all-kept') record.sent = sentAllKept(mapped.segments);
  const unknown: Json = {};
  for (const [k, v] of Object.entries(attrs)) if (!consumed.has(k)) unknown[k] = v;
  record.import = { from: 'otlp', line: s.line, trace: s.traceId, span: s.spanId };
  record.otel = {
    traceId: s.traceId,
    spanId: s.spanId,
    ...(s.parentSpanId ? { parentSpanId: s.parentSpanId } : {}),
    name: s.name,
    ...(s.scope ? { scope: s.scope } : {}),
    resource: s.resource,
    attributes: unknown,
    ...(s.events.length ? { events: s.events.map((e) => e.name) } : {}),
    retrieval: retrievals.map((r) => ({ spanId: r.spanId, name: r.name, attributes: Object.fromEntries(Object.entries(r.attrs).filter(([k]) => k !== 'gen_ai.retrieval.documents')) })),
  };
  const explain: RecordExplain = {
    line: s.line,
    source: `span ${s.spanId} "${s.name}" (trace ${s.traceId})`,
    conversation: conv ? `"${conv}" from gen_ai.conversation.id` : `"trace-${s.traceId}": no gen_ai.conversation.id, the trace is the conversation`,
    turn: mapped.info.at(-1)!,
    ...why,
    messages: mapped.explain,
    info: [
      `messages from ${input.from}`,
      retrievals.length ? `retrieval from ${docSpans.join(', ') || retrievals.map((r) => r.spanId).join(', ')}` : 'no retrieval span in the trace before this call',
      ...mapped.info.slice(0, -1),
    ],
  };
  return { result: { record, explain }, issues };
}

/** Parses one line of an OTLP/JSON file into spans (or an issue). */
export function spansOfLine(text: string, line: number): { spans: FlatSpan[]; issue?: LogIssue } {
  let doc: unknown;
  try {
    doc = JSON.parse(text);
  } catch (e) {
    const pos = /position (\d+)/.exec((e as Error).message);
    return { spans: [], issue: { line, column: pos ? Number(pos[1]) + 1 : 1, code: 'bad-json', message: `bad JSON: ${(e as Error).message}` } };
  }
  if (!isObject(doc) || !Array.isArray(doc['resourceSpans'])) {
    return { spans: [], issue: { line, column: 1, code: 'import-skipped', message: 'not an OTLP/JSON traces object (no "resourceSpans"); line skipped' } };
  }
  return { spans: flattenTraces(doc, () => line) };
}
