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
