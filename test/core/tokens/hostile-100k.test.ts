/**
 * Issue 10's rows at n = 100,000 against the reference encoder. tiktoken needs 11–24 s per row here
 * (minutes on a busy machine), so its ids are stored as sha256 hashes in
 * test/fixtures/tokens/hostile-reference.json, written by test/fixtures/tokens/make-hostile-reference.ts
 * (which runs only tiktoken). The fixture also stores each input's hash, so a changed generator fails
 * loudly instead of comparing different texts. Set SPILLWAY_LIVE_REFERENCE=1 to compare with tiktoken live.
 * The 1,000 and 10,000 rows are compared live in encoder.test.ts.
 */
import { get_encoding } from 'tiktoken';
import { beforeAll, describe, expect, it } from 'vitest';
import { loadEncoder, type Encoder, type EncodingName } from '../../../extension/core/tokens/encoder';
import { HOSTILE_ROWS, idsHash, readReference, textHash } from '../../../scripts/bench-hostile';

const NAMES: EncodingName[] = ['cl100k_base', 'o200k_base'];
const N = 100_000;
const reference = readReference();
const encoders = new Map<EncodingName, Encoder>();
beforeAll(async () => {
  for (const n of NAMES) encoders.set(n, await loadEncoder(n));
}, 120_000);

describe('hostile rows at n = 100,000: ids identical to tiktoken (stored reference hashes)', () => {
  it('the reference fixture exists and was made by tiktoken', () => {
    expect(reference?.generatedBy).toContain('tiktoken');
  });
  for (const name of NAMES) {
    for (const row of HOSTILE_ROWS) {
      it(`${name} · ${row.label}`, () => {
        const stored = reference!.rows.find((r) => r.encoding === name && r.row === row.id && r.n === N);
        expect(stored, 'missing row: run make-hostile-reference').toBeDefined();
        const text = row.make(N);
        expect(textHash(text), 'generator changed: regenerate the fixture').toBe(stored!.textSha256);
        const ids = encoders.get(name)!.encode(text); // gpt-tokenizer's own encode throws RangeError on the CJK row
        expect(ids.length).toBe(stored!.count);
        expect(idsHash(ids)).toBe(stored!.idsSha256);
        expect(encoders.get(name)!.count(text)).toBe(stored!.count);
      }, 60_000);
    }
  }
});

describe.runIf(process.env.SPILLWAY_LIVE_REFERENCE === '1')('hostile rows at n = 100,000 against live tiktoken', () => {
  for (const name of NAMES) {
    for (const row of HOSTILE_ROWS) {
      it(`${name} · ${row.label}`, () => {
        const tk = get_encoding(name);
        try {
          const text = row.make(N);
          expect(encoders.get(name)!.encode(text).join(' ')).toBe(Array.from(tk.encode_ordinary(text)).join(' '));
        } finally {
          tk.free();
        }
      }, 1_200_000);
    }
  }
});
