/**
 * Both encodings, ours and the reference (`tiktoken` WASM), loaded once per test file: call
 * `encoderPair()` at the top level of a test file; the maps fill in `beforeAll` and the reference
 * encoders are freed in `afterAll`.
 */
import { get_encoding, type Tiktoken } from 'tiktoken';
import { afterAll, beforeAll } from 'vitest';
import { loadEncoder, type Encoder, type EncodingName } from '../../extension/core/tokens/encoder';

export const NAMES: EncodingName[] = ['cl100k_base', 'o200k_base'];

export function encoderPair(): { encoders: Map<EncodingName, Encoder>; refs: Map<EncodingName, Tiktoken> } {
  const encoders = new Map<EncodingName, Encoder>();
  const refs = new Map<EncodingName, Tiktoken>();
  beforeAll(async () => {
    for (const n of NAMES) {
      encoders.set(n, await loadEncoder(n));
      refs.set(n, get_encoding(n));
    }
  }, 120_000); // two vocabularies per library; slow on a busy 2-core machine
  afterAll(() => {
    for (const r of refs.values()) r.free();
  });
  return { encoders, refs };
}
