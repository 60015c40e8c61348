/**
 * Spillway's encoder against things outside the project: a published check value, and the reference BPE
 * implementation (`tiktoken` WASM bindings, `encode_ordinary`, a devDependency). Nothing here compares
 * the encoder with itself.
 */
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import * as gptCl100k from 'gpt-tokenizer/encoding/cl100k_base';
import * as gptO200k from 'gpt-tokenizer/encoding/o200k_base';
import { decodeBytes, type Encoder, type EncodingName } from '../../../extension/core/tokens/encoder';
import { HOSTILE_ROWS } from '../../../scripts/bench-hostile';
import { encoderPair, NAMES } from '../../support/encoders';

const NO_SPECIAL = { allowedSpecial: new Set<string>(), disallowedSpecial: new Set<string>() };
const { encoders, refs } = encoderPair();

const enc = (n: EncodingName): Encoder => encoders.get(n)!;
const ref = (n: EncodingName, text: string): number[] => Array.from(refs.get(n)!.encode_ordinary(text));

function expectSameAsReference(name: EncodingName, text: string): void {
  const ids = enc(name).encode(text);
  const expected = ref(name, text);
  // Compare as strings: on a mismatch vitest prints a readable diff instead of 100k array elements.
  expect(ids.join(' '), `${name} ids for ${JSON.stringify(text.slice(0, 60))}…`).toBe(expected.join(' '));
  expect(enc(name).count(text)).toBe(expected.length);
}

describe('published check value', () => {
  it('"tiktoken is great!" is 6 tokens in cl100k_base', () => {
    // OpenAI cookbook, "How to count tokens with tiktoken": encoding.encode("tiktoken is great!")
    // → [83, 1609, 5963, 374, 2294, 0], "6 tokens".
    expect(enc('cl100k_base').count('tiktoken is great!')).toBe(6);
    expect(enc('cl100k_base').encode('tiktoken is great!')).toEqual([83, 1609, 5963, 374, 2294, 0]);
  });
});

describe('hostile rows (issue 10) at n = 1,000 and 10,000: ids identical to tiktoken', () => {
  for (const name of NAMES) {
    for (const row of HOSTILE_ROWS) {
      for (const n of [1_000, 10_000]) {
        it(`${name} · ${row.label} · n=${n}`, () => expectSameAsReference(name, row.make(n)));
      }
    }
  }
});

/** Unicode torture list (issue 2). Every entry is compared with tiktoken in both encodings. */
export const TORTURE: Record<string, string> = {
  'BOM at start': '\uFEFFhello world',
  'BOM inside words and runs': 'a\uFEFF b x \uFEFF\uFEFF y\uFEFF\uFEFF\uFEFF',
  'BOM before newline': 'line\uFEFF\r\nnext',
  'NEXT LINE U+0085': 'a\u0085b a \u0085 b \u0085\u0085x end\u0085',
  'NEL with newlines': 'x\u0085\n\u0085 \n  y',
  'zero-width joiner/non-joiner/space': 'hi\u200d\u200dthere\u200c ok\u200b\u200bzero',
  'CJK': '东京都の地下鉄は便利です。中文没有空格也能分词吗？한국어 문장도 있습니다',
  'emoji with skin tones': '👍🏽 👋🏿👋🏻 thumbs 🤙🏾',
  'emoji ZWJ sequences': '👩🏽‍💻 👨‍👩‍👧‍👦 🏳️‍🌈 🧑🏿‍🤝‍🧑🏻 done',
  'regional indicator flags': '🇳🇿🇯🇵🇩🇪 flags',
  'combining marks': 'e\u0301e\u0301\u0301 a\u0308\u0323 Z\u0351\u0352\u0353\u0354\u0355 ñ vs n\u0303',
  'precomposed vs decomposed': 'café cafe\u0301 Åström A\u030Astro\u0308m',
  'CRLF': 'one\r\ntwo\r\n\r\nthree\r\n',
  'lone CR and mixed newlines': 'a\rb\n\rc\r\r\nd  \r\n  e',
  'very long digit run': '1234567890'.repeat(120),
  'digits with separators': '3.14159265358979 1,000,000 ٣٤٥ ١٢٣٤٥٦٧ ⅷ ²³',
  'special-token text is ordinary text': 'before <|endoftext|> after <|im_start|>user<|im_sep|>hi<|im_end|> <|fim_prefix|>',
  'lone high surrogate': 'ab\uD800cd',
  'lone low surrogate': '\uDC00 x \uDC00\uDC00',
  'high surrogate at end': 'tail \uD83D',
  'only a lone surrogate': '\uD800',
  'long s in contractions': "IT'ſ ok it'ſt they'Re we'LL I'D",
  'apostrophe contractions': "don't won't they're we've I'm you'll he'd DON'T",
  'NBSP and other spaces': 'a\u00a0b \u2003 c\u3000\u3000d\u202fe \u2009\u200a',
  'line/paragraph separators': 'x\u2028y\u2029z \u2028\u2029',
  'tabs and trailing spaces': '\tindent\t\ttab   \n   ',
  'right-to-left and bidi controls': 'עברית العربية \u202eevil\u202c \u200f',
  'Devanagari and Thai': 'नमस्ते दुनिया ภาษาไทยไม่มีช่องว่าง',
  'math alphanumerics (astral letters)': '𝐀𝐁𝐂 𝒜𝒷𝒸 𝕏',
  'control characters': '\u0000\u0001\u001b[31mred\u001b[0m\u007f',
  'replacement char and private use': '\uFFFD\uE000\uF8FF \u{F0000}',
  'variation selectors': '☺︎ ☺️ ❤︎❤️ 1️⃣',
  'minified JSON': '{"a":[1,2,3],"b":{"c":"d\\u00e9","e":null},"f":true,"g":-1.5e-7}'.repeat(20),
  'URL and path': 'https://example.invalid/a/b?c=d&e=f#g C:\\Users\\x\\file.txt /usr/local/bin//',
  'long dash and punctuation run': '-'.repeat(300) + '!!!???...' + '='.repeat(200),
  'long run of one CJK character': '的'.repeat(500),
  'long mixed whitespace run': ' \t'.repeat(200) + '\n' + ' '.repeat(150) + 'x',
  'long run of one emoji': '😀'.repeat(300),
  'long combining-mark run (o200k letters+marks)': 'a' + '\u0301'.repeat(400),
};

describe('issue 2 agreement: Unicode torture list, ids identical to tiktoken', () => {
  for (const name of NAMES) {
    for (const [label, text] of Object.entries(TORTURE)) {
      it(`${name} · ${label}`, () => expectSameAsReference(name, text));
    }
  }
});

describe('cases where plain gpt-tokenizer 4.0.0 disagrees with tiktoken (fixed here, kept as tests)', () => {
  // JS `\s` includes U+FEFF; the reference's Rust `\s` (Unicode White_Space) does not, so gpt-tokenizer
  // splits a BOM off as whitespace. Ids below were read from tiktoken (the assertion re-reads them live).
  const cases: Array<[EncodingName, string]> = [
    ['cl100k_base', '\uFEFFhello'],
    ['o200k_base', '\uFEFFhello'],
    ['o200k_base', 'x \uFEFF\uFEFF y'],
  ];
  for (const [name, text] of cases) {
    it(`${name} · ${JSON.stringify(text)}`, () => {
      const plain = (name === 'cl100k_base' ? gptCl100k : gptO200k).encode(text, NO_SPECIAL);
      const reference = ref(name, text);
      expect(plain).not.toEqual(reference); // the disagreement this project routes around
      expect(enc(name).encode(text)).toEqual(reference);
    });
  }
  it('cl100k_base "\\uFEFFhello" is [3305, 15339] in tiktoken, [171, 3299, 15339] in gpt-tokenizer', () => {
    // Observed values (tiktoken 1.0.22 / gpt-tokenizer 4.0.0), written out so the case stays readable.
    expect(ref('cl100k_base', '\uFEFFhello')).toEqual([3305, 15339]);
    expect(gptCl100k.encode('\uFEFFhello', NO_SPECIAL)).toEqual([171, 3299, 15339]);
    expect(enc('cl100k_base').encode('\uFEFFhello')).toEqual([3305, 15339]);
  });
});

/** Text of every segment (and reply) in the sample workspace's logs; malformed lines are skipped here. */
function sampleTexts(): Array<{ where: string; text: string }> {
  const dir = join(process.cwd(), 'sample-workspace', 'logs');
  if (!existsSync(dir)) return [];
  const out: Array<{ where: string; text: string }> = [];
  for (const file of readdirSync(dir).filter((f) => f.endsWith('.jsonl') || f.endsWith('.ndjson')).sort()) {
    const lines = readFileSync(join(dir, file), 'utf8').split('\n');
    lines.forEach((line, i) => {
      let rec: unknown;
      try {
        rec = JSON.parse(line);
      } catch {
        return;
      }
      if (typeof rec !== 'object' || rec === null) return;
      const r = rec as { segments?: unknown; reply?: unknown };
      if (Array.isArray(r.segments)) {
        for (const s of r.segments as Array<{ id?: unknown; text?: unknown }>) {
          if (typeof s?.text === 'string') out.push({ where: `${file}:${i + 1} ${String(s.id)}`, text: s.text });
        }
      }
      if (typeof r.reply === 'string') out.push({ where: `${file}:${i + 1} reply`, text: r.reply });
    });
  }
  return out;
}

describe('issue 2 agreement: every segment of sample-workspace/logs/*.jsonl', () => {
  const texts = sampleTexts();
  it.skipIf(texts.length === 0)(`ids identical to tiktoken (${texts.length} texts)`, () => {
    for (const name of NAMES) {
      for (const { where, text } of texts) {
        const ids = enc(name).encode(text);
        const expected = ref(name, text);
        expect(ids.join(' '), `${name} ${where}`).toBe(expected.join(' '));
        expect(enc(name).count(text), `${name} ${where}`).toBe(expected.length);
      }
    }
  });
});

describe('decode', () => {
  it('round-trips the torture list, with tiktoken decoding our ids to the same bytes', () => {
    for (const name of NAMES) {
      for (const text of Object.values(TORTURE)) {
        const ids = enc(name).encode(text);
        const bytes = decodeBytes(enc(name), ids);
        expect(Buffer.from(bytes).equals(Buffer.from(refs.get(name)!.decode(Uint32Array.from(ids))))).toBe(true);
        // Lone surrogates are not representable in UTF-8; both encoders see U+FFFD in their place.
        expect(enc(name).decode(ids)).toBe(text.replace(/\p{Cs}/gu, '\uFFFD'));
      }
    }
  });

  it('decodes a slice that ends inside a character to U+FFFD, and keeps no state into the next call', () => {
    const e = enc('cl100k_base');
    const ids = e.encode('😀'); // 4 UTF-8 bytes (F0 9F 98 80) spread over several tokens
    expect(ids.length).toBeGreaterThan(1);
    expect(e.decode(ids.slice(0, 1))).toContain('\uFFFD');
    // A streaming decoder shared between calls would prepend the left-over bytes here.
    expect(e.decode(e.encode('ok'))).toBe('ok');
    expect(e.decode(ids)).toBe('😀');
  });
});
