/**
 * Independent recount for tests: the `tiktoken` WASM bindings (the reference Rust BPE), plus the
 * published chat framing rule written out here separately from the project's own code (OpenAI
 * cookbook, "How to count tokens with tiktoken": 3 per message, each value's tokens, 1 per name,
 * 3 to prime the reply).
 */
import { get_encoding, type Tiktoken } from 'tiktoken';

const cache = new Map<string, Tiktoken>();
export function ref(encoding: 'cl100k_base' | 'o200k_base'): Tiktoken {
  let e = cache.get(encoding);
  if (!e) {
    e = get_encoding(encoding);
    cache.set(encoding, e);
  }
  return e;
}

export const refCount = (encoding: 'cl100k_base' | 'o200k_base', text: string): number => ref(encoding).encode_ordinary(text).length;

export interface RefMessage {
  role: string;
  content: string;
  name?: string;
}

/** The cookbook's num_tokens_from_messages, re-implemented on the reference encoder. */
export function refChatTokens(encoding: 'cl100k_base' | 'o200k_base', messages: RefMessage[]): number {
  let n = 0;
  for (const m of messages) {
    n += 3;
    n += refCount(encoding, m.role);
    n += refCount(encoding, m.content);
    if (m.name !== undefined) n += refCount(encoding, m.name) + 1;
  }
  return n + 3;
}

interface RefSegment {
  id: string;
  role: string;
  text: string;
  name?: string;
  message?: number;
}
interface RefLedgerSegment {
  fate: 'kept' | 'clipped' | 'dropped';
  cut?: { char: number };
}
type RefFraming = 'chat' | 'none' | { perMessage: number; perName: number; priming: number; countRole: boolean } | undefined;

/**
 * Renders the prompt a ledger says was sent — messages grouped by `message` index, texts of one
 * message joined with a blank line, clipped texts cut at `cut.char` — and counts it with the
 * reference encoder and the framing rule, written independently of the project's meter.
 */
export function refSentTokens(encoding: 'cl100k_base' | 'o200k_base', framing: RefFraming, segments: RefSegment[], fates: RefLedgerSegment[]): number {
  const f = framing === undefined || framing === 'chat' ? { perMessage: 3, perName: 1, priming: 3, countRole: true } : framing === 'none' ? { perMessage: 0, perName: 0, priming: 0, countRole: false } : framing;
  const order: string[] = [];
  const groups = new Map<string, { role: string; name?: string; parts: string[] }>();
  segments.forEach((s, i) => {
    const key = s.message !== undefined ? `m${s.message}` : `s${i}`;
    if (!groups.has(key)) {
      groups.set(key, { role: s.role, name: s.name, parts: [] });
      order.push(key);
    }
    const fate = fates[i]!;
    if (fate.fate === 'dropped') return;
    groups.get(key)!.parts.push(fate.fate === 'clipped' ? s.text.slice(0, fate.cut!.char) : s.text);
  });
  let n = 0;
  let present = 0;
  for (const key of order) {
    const g = groups.get(key)!;
    if (g.parts.length === 0) continue;
    present++;
    n += f.perMessage + refCount(encoding, g.parts.join('\n\n'));
    if (f.countRole) n += refCount(encoding, g.role);
    if (g.name !== undefined) n += (f.countRole ? refCount(encoding, g.name) : 0) + f.perName;
  }
  return present ? n + f.priming : 0;
}
