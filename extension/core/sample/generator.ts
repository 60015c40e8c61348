/**
 * Deterministic generator of large Spillway logs (format v1) for benchmarks and scale tests.
 *
 * Shape of the output, chosen to look like a production rider-help assistant:
 * - several conversations run at once and their records interleave (like a real service's log);
 * - each conversation has 3–40 turns and re-sends its whole history every turn (so the log grows
 *   with turns squared while its unique text grows only with turns);
 * - passages come from a fixed pool of invented articles (`knowledgeBase.ts`), skewed towards the
 *   first articles of a topic and carried over between turns, so the same passages recur often;
 *   now and then a reworded mirror copy of the rank-1 article is retrieved too (a near-duplicate);
 * - small windows among the budget choices make clipped and dropped passages occur on long turns;
 * - with a `count` function, some records carry API-style `usage` (see `usageFor`);
 * - about one line in 50,000 is malformed (a record cut off mid-write), unless turned off.
 *
 * Pure and lazy: it yields one line at a time and keeps only the open conversations in memory, so a
 * gigabyte log streams through it. Same options → same bytes.
 */
import { buildKnowledgeBase, fillTemplate, mirrorOf, type Article, type KnowledgeBase } from './knowledgeBase';
import { mixSeed, mulberry32, type Rng } from './prng';
import { QUESTIONS, STATIONS, TOPICS, UNSUPPORTED_CLAIMS, USER_OPENERS, type Topic } from './vocabulary';
import type { EncodingName } from '../tokens/encoder';
import type { LogRecord, Segment } from '../log/types';
import { utf8Length } from '../text/utf8';
export { utf8Length };

export interface BudgetChoice {
  window: number;
  reserve: number;
}

export interface ModelChoice {
  name: string;
  encoding: EncodingName;
  /** Relative weight of this model among the choices. */
  weight: number;
}

export interface GeneratorOptions {
  seed: number;
  /** Stop after this many lines (records, malformed ones included). Default: 1000 unless `maxBytes` is set. */
  turns?: number;
  /** Stop after about this many UTF-8 bytes (newlines included); checked after each line. */
  maxBytes?: number;
  /** Turns per conversation, inclusive range. Default 3–40. */
  minTurns?: number;
  maxTurns?: number;
  budgets?: readonly BudgetChoice[];
  models?: readonly ModelChoice[];
  /** Probability that a line is malformed. Default 1/50,000; 0 turns it off. */
  malformedRate?: number;
  /** Articles in the knowledge-base pool. Default 3000. */
  poolSize?: number;
  /** Seed of the article pool (kept apart from `seed` so different logs share one knowledge base). */
  poolSeed?: number;
  /** Conversations open at once (their records interleave). Default 3. */
  concurrency?: number;
  /**
   * Exact token counter. When given, about `usageRate` of the records whose whole prompt fits the budget
   * carry `usage` computed with it; without it no record has `usage` (a made-up figure would make the
   * audit's drift column meaningless).
   */
  count?: (text: string, encoding: EncodingName) => number;
  /** Share of fitting records that carry usage (needs `count`). Default 0.25. */
  usageRate?: number;
}

export const DEFAULT_BUDGETS: readonly BudgetChoice[] = [
  { window: 2048, reserve: 512 },
  { window: 4096, reserve: 512 },
  { window: 8192, reserve: 1024 },
  { window: 16384, reserve: 2048 },
];

export const DEFAULT_MODELS: readonly ModelChoice[] = [
  { name: 'gpt-4o-mini', encoding: 'o200k_base', weight: 6 },
  { name: 'gpt-4o', encoding: 'o200k_base', weight: 2 },
  { name: 'gpt-4', encoding: 'cl100k_base', weight: 2 },
];

export const DEFAULT_MALFORMED_RATE = 1 / 50_000;
export const DEFAULT_POOL_SIZE = 3000;
export const DEFAULT_POOL_SEED = 20260301;

/** One generated line, and whether it was made malformed on purpose. */
export interface GeneratedLine {
  text: string;
  malformed: boolean;
}

const INSTRUCTIONS = [
  'You are the rider-help assistant of Harbourline Transit. Answer questions about fares, passes, ' +
    'accessibility, lost property and service changes. Use only the passages supplied under "Help ' +
    'centre passages". If the passages do not answer the question, say so and point the rider to the ' +
    'travel centre at Harbour Central. Keep answers short, friendly and in plain British English. ' +
    'Never invent prices, times or station facilities.',
  'Harbourline Transit rider help. Role: answer riders briefly and correctly. Ground every fact in ' +
    'the retrieved help-centre passages; quote prices and times exactly as written there. When ' +
    'passages disagree, prefer the most recent one and mention the difference. Do not give legal ' +
    'advice. Do not ask for card numbers.',
  'You help riders of Harbourline Transit plan journeys and understand tickets. Rules: (1) Use the ' +
    'passages, not memory. (2) If a station facility is out of service, offer the nearest step-free ' +
    'alternative. (3) For refunds and lost property, explain the steps and the deadline. (4) Be concise.',
];

const REPLY_OPENERS = [
  'Thanks for asking.', 'Good question.', 'Here is what our help centre says.', 'I can help with that.', '',
] as const;

interface HistoryTurn {
  user: Segment;
  assistant: Segment;
}

interface Conversation {
  id: string;
  rng: Rng;
  length: number;
  nextTurn: number;
  model: ModelChoice;
  budget: BudgetChoice;
  instructions: string;
  topic: Topic;
  history: HistoryTurn[];
  lastPassages: Article[];
}


function pickWeighted(rng: Rng, models: readonly ModelChoice[]): ModelChoice {
  const total = models.reduce((s, m) => s + m.weight, 0);
  let r = rng.next() * total;
  for (const m of models) {
    r -= m.weight;
    if (r < 0) return m;
  }
  return models[models.length - 1] as ModelChoice;
}

/** Skewed pick: r^2.5 puts most picks on the first articles of a topic, so passages recur. */
function skewedIndex(rng: Rng, length: number): number {
  return Math.min(length - 1, Math.floor(length * Math.pow(rng.next(), 2.5)));
}

/**
 * Chat-framed prompt size by the published rule (OpenAI cookbook, "How to count tokens with tiktoken"):
 * 3 tokens per message + its role + its content, + 3 to prime the reply. Each generated segment is its
 * own message and none has a name.
 */
function framedTotal(segments: readonly Segment[], count: (t: string) => number): number {
  let total = 3;
  for (const s of segments) total += 3 + count(s.role) + count(s.text);
  return total;
}

export function* generateEntries(options: GeneratorOptions): Generator<GeneratedLine> {
  const maxLines = options.turns ?? (options.maxBytes === undefined ? 1000 : Number.POSITIVE_INFINITY);
  const maxBytes = options.maxBytes ?? Number.POSITIVE_INFINITY;
  const minTurns = options.minTurns ?? 3;
  const maxTurns = options.maxTurns ?? 40;
  if (!(minTurns >= 1 && maxTurns >= minTurns)) throw new RangeError(`bad turn range ${minTurns}–${maxTurns}`);
  const budgets = options.budgets ?? DEFAULT_BUDGETS;
  const models = options.models ?? DEFAULT_MODELS;
  if (budgets.length === 0 || models.length === 0) throw new RangeError('budgets and models must not be empty');
  const malformedRate = options.malformedRate ?? DEFAULT_MALFORMED_RATE;
  const concurrency = Math.max(1, options.concurrency ?? 3);
  const usageRate = options.usageRate ?? 0.25;
  const kb: KnowledgeBase = buildKnowledgeBase(options.poolSeed ?? DEFAULT_POOL_SEED, options.poolSize ?? DEFAULT_POOL_SIZE);

  const main = mulberry32(mixSeed(options.seed, 0x5eed));
  let conversationsStarted = 0;
  let clock = Date.UTC(2026, 2, 2, 8, 0, 0);
  const open: Conversation[] = [];

  const startConversation = (): Conversation => {
    const index = conversationsStarted++;
    const rng = mulberry32(mixSeed(options.seed, index + 1));
    return {
      id: `hx-${(options.seed >>> 0).toString(36)}-${String(index).padStart(6, '0')}`,
      rng,
      length: rng.int(minTurns, maxTurns),
      nextTurn: 1,
      model: pickWeighted(rng, models),
      budget: rng.pick(budgets),
      instructions: rng.pick(INSTRUCTIONS),
      topic: rng.pick(TOPICS),
      history: [],
      lastPassages: [],
    };
  };

  let lines = 0;
  let bytes = 0;
  while (lines < maxLines && bytes < maxBytes) {
    while (open.length < concurrency) open.push(startConversation());
    const slot = main.int(0, open.length - 1);
    const conv = open[slot] as Conversation;
    clock += main.int(1, 90) * 1000;
    const record = nextRecord(conv, kb, new Date(clock).toISOString(), options.count, usageRate);
    let text = JSON.stringify(record);
    let malformed = false;
    if (malformedRate > 0 && main.chance(malformedRate)) {
      // A record cut off mid-write: any proper prefix of a JSON object's text is invalid JSON.
      text = text.slice(0, main.int(1, text.length - 2));
      malformed = true;
    }
    if (conv.nextTurn > conv.length) open.splice(slot, 1);
    lines++;
    bytes += utf8Length(text) + 1;
    yield { text, malformed };
  }
}

/** The log's lines (without newline characters), lazily. */
export function* generateLog(options: GeneratorOptions): Generator<string> {
  for (const entry of generateEntries(options)) yield entry.text;
}

function nextRecord(
  conv: Conversation,
  kb: KnowledgeBase,
  time: string,
  count: GeneratorOptions['count'],
  usageRate: number,
): LogRecord {
  const rng = conv.rng;
  const turn = conv.nextTurn++;
  if (turn > 1 && rng.chance(0.2)) conv.topic = rng.pick(TOPICS);
  const topicArticles = kb.byTopic.get(conv.topic) ?? kb.articles;

  // Retrieval: carry over about half of last turn's passages, fill up from the topic, skewed.
  const k = rng.int(3, 8);
  const chosen: Article[] = [];
  const seen = new Set<string>();
  const add = (a: Article): void => {
    if (chosen.length < k && !seen.has(a.id)) {
      seen.add(a.id);
      chosen.push(a);
    }
  };
  for (const a of conv.lastPassages) if (rng.chance(0.5)) add(a);
  for (let tries = 0; chosen.length < k && tries < 4 * k; tries++) {
    add(topicArticles[skewedIndex(rng, topicArticles.length)] as Article);
  }
  // Shuffle the carried-over and new passages into one ranking (Fisher–Yates).
  for (let i = chosen.length - 1; i > 0; i--) {
    const j = rng.int(0, i);
    [chosen[i], chosen[j]] = [chosen[j] as Article, chosen[i] as Article];
  }
  if (chosen.length > 1 && rng.chance(0.06)) chosen.splice(rng.int(1, chosen.length - 1), 0, mirrorOf(chosen[0] as Article));
  conv.lastPassages = chosen.filter((a) => !a.id.endsWith('-mirror'));

  let score = 0.9 - rng.next() * 0.1;
  const passages: Segment[] = chosen.map((a, i) => {
    const seg: Segment = {
      id: a.id,
      kind: 'passage',
      role: 'system',
      text: a.text,
      rank: i + 1,
      score: Math.round(score * 1000) / 1000,
      source: a.source,
      date: a.date,
    };
    score -= 0.02 + rng.next() * 0.06;
    return seg;
  });

  // The query: a template plus a little text unique to this turn.
  const opener = rng.pick(USER_OPENERS);
  let query = `${opener ? opener + ' ' : ''}${fillTemplate(rng.pick(QUESTIONS[conv.topic]), rng, conv.topic)}`;
  if (rng.chance(0.3)) query += ` My reference is HX-${rng.int(10000, 99999)}.`;
  if (rng.chance(0.15)) query += ` I'm travelling with ${rng.int(2, 5)} others from ${rng.pick(STATIONS)}.`;
  if (rng.chance(0.05)) {
    // A pasted itinerary: the kind of long query that squeezes everything else.
    const rows: string[] = [];
    // One in five is a whole pasted document, long enough to put a small window over budget.
    for (let i = rng.chance(0.2) ? rng.int(60, 160) : rng.int(8, 40); i > 0; i--) {
      rows.push(`${fillTemplate('{weekday} {time} dep {station} → {station2} ({line})', rng)}`);
    }
    query += `\n${rows.join('\n')}`;
  }

  // The reply: grounded sentences from the top passages, now and then an unsupported claim.
  const replyParts: string[] = [];
  const opening = rng.pick(REPLY_OPENERS);
  if (opening) replyParts.push(opening);
  for (const a of chosen.slice(0, rng.int(1, 2))) {
    const body = a.text.split('\n\n')[1] ?? a.text;
    const sentences = body.split(/(?<=\.)\s+/);
    replyParts.push(rng.pick(sentences));
  }
  if (rng.chance(0.08)) replyParts.push(rng.pick(UNSUPPORTED_CLAIMS));
  if (rng.chance(0.5)) replyParts.push('Is there anything else I can help with?');
  const reply = replyParts.join(' ');

  const segments: Segment[] = [{ id: 'instructions', kind: 'instructions', role: 'system', text: conv.instructions }];
  for (const h of conv.history) segments.push(h.user, h.assistant);
  segments.push(...passages);
  segments.push({ id: 'query', kind: 'query', role: 'user', text: query });

  const record: LogRecord = {
    v: 1,
    conversation: conv.id,
    turn,
    time,
    model: { name: conv.model.name, encoding: conv.model.encoding, window: conv.budget.window, reserve: conv.budget.reserve },
    framing: 'chat',
    plan: 'recent-first',
    segments,
    reply,
  };

  // Drawn on every turn, so adding `count` changes only the usage fields, not the rest of the log.
  const wantsUsage = rng.chance(usageRate);
  const drift = rng.chance(0.05) ? rng.int(1, 12) : 0;
  if (count && wantsUsage) {
    const enc = conv.model.encoding;
    const total = framedTotal(segments, (t) => count(t, enc));
    // Only a prompt that fit whole was sent whole; for those, the API would report its exact size.
    // A few carry drift (e.g. a provider-side preamble the log does not show), so the audit has some to find.
    if (total <= conv.budget.window - conv.budget.reserve) {
      record.usage = { prompt: total + drift, completion: count(reply, enc) };
    }
  }

  conv.history.push({
    user: { id: `t${turn}-user`, kind: 'history', role: 'user', turn, text: query },
    assistant: { id: `t${turn}-assistant`, kind: 'history', role: 'assistant', turn, text: reply },
  });
  return record;
}
