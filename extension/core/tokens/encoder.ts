import { exactCount, exactEncode, needsExactPath, type PieceCoder } from './bpe/exactEncode';
import { SPLIT_PATTERNS } from './bpe/pretokenize';
import { RankTable, type RawRanks } from './bpe/rankTable';
import { concatBytes } from '../text/bytes';

/**
 * Exact BPE encoders, loaded lazily (the rank tables are large: nothing is parsed until a log needs it).
 * Special-token strings inside text (e.g. "<|endoftext|>") are encoded as ordinary text, the way an
 * API encodes message content. Ids agree with the reference encoder (tiktoken) — see test/core/tokens/ —
 * and encoding stays O(n log n) per pre-tokenised piece on hostile text (docs/hostile-text.md).
 */
export const ENCODINGS = ['cl100k_base', 'o200k_base'] as const;
export type EncodingName = (typeof ENCODINGS)[number];

export interface Encoder {
  readonly name: EncodingName;
  encode(text: string): number[];
  count(text: string): number;
  /** Text of the ids; bytes of a character cut by the slice decode to U+FFFD (no error, no state kept). */
  decode(ids: readonly number[]): string;
}

export function isEncodingName(name: string): name is EncodingName {
  return (ENCODINGS as readonly string[]).includes(name);
}

/**
 * Model name → encoding, by prefix. Common practice, following the published tiktoken model table
 * (gpt-4o, gpt-4.1, gpt-4.5, gpt-5, o1/o3/o4 use o200k_base; gpt-4, gpt-3.5-turbo and the
 * text-embedding-3 / ada-002 models use cl100k_base).
 */
const MODEL_PREFIXES: ReadonlyArray<readonly [string, EncodingName]> = [
  ['gpt-4o', 'o200k_base'],
  ['chatgpt-4o', 'o200k_base'],
  ['gpt-4.1', 'o200k_base'],
  ['gpt-4.5', 'o200k_base'],
  ['gpt-5', 'o200k_base'],
  ['o1', 'o200k_base'],
  ['o3', 'o200k_base'],
  ['o4', 'o200k_base'],
  ['gpt-oss', 'o200k_base'],
  ['gpt-4', 'cl100k_base'],
  ['gpt-3.5', 'cl100k_base'],
  ['text-embedding-3', 'cl100k_base'],
  ['text-embedding-ada-002', 'cl100k_base'],
];

export function encodingForModel(model: string): EncodingName | undefined {
  const m = model.toLowerCase();
  for (const [prefix, enc] of MODEL_PREFIXES) if (m.startsWith(prefix)) return enc;
  return undefined;
}

const NO_SPECIAL = { allowedSpecial: new Set<string>(), disallowedSpecial: new Set<string>() };

interface GptTokenizerModule {
  encode(text: string, opts?: unknown): number[];
  countTokens(text: string, opts?: unknown): number;
}

/**
 * Ordinary text goes to gpt-tokenizer as a whole. Text that may hold a long pre-tokenised piece (where
 * gpt-tokenizer's merge is quadratic and its `encode` overflows the stack) or a character on which
 * gpt-tokenizer disagrees with the reference encoder takes the exact pipeline in ./bpe (docs/hostile-text.md).
 */
function wrap(name: EncodingName, mod: GptTokenizerModule, raw: RawRanks): Encoder {
  let table: RankTable | undefined;
  const coder: PieceCoder = {
    split: SPLIT_PATTERNS[name],
    table: () => (table ??= new RankTable(raw)),
    encodeOrdinary: (piece) => mod.encode(piece, NO_SPECIAL),
    countOrdinary: (piece) => mod.countTokens(piece, NO_SPECIAL),
  };
  const encoder: Encoder = {
    name,
    encode: (text) => (needsExactPath(text) ? exactEncode(coder, text) : mod.encode(text, NO_SPECIAL)),
    count: (text) => (needsExactPath(text) ? exactCount(coder, text) : mod.countTokens(text, NO_SPECIAL)),
    decode: (ids) => utf8Decoder.decode(decodeIds(coder.table(), ids)),
  };
  vocabularies.set(encoder, coder.table);
  return encoder;
}

const vocabularies = new WeakMap<Encoder, () => RankTable>();

function vocabularyOf(encoder: Encoder): RankTable {
  const table = vocabularies.get(encoder);
  if (!table) throw new Error('this function needs an encoder from loadEncoder()');
  return table();
}

/** The UTF-8 bytes the ids stand for (for cut points and boundaries measured in bytes). */
export function decodeBytes(encoder: Encoder, ids: readonly number[]): Uint8Array {
  return decodeIds(vocabularyOf(encoder), ids);
}

/** The UTF-8 bytes of one ordinary token (a shared, cached array: do not modify). */
export function tokenBytes(encoder: Encoder, id: number): Uint8Array {
  const b = vocabularyOf(encoder).bytesOf(id);
  if (!b) throw new Error(`Token id ${id} is not an ordinary token of ${encoder.name}`);
  return b;
}

/** Non-streaming, non-fatal: an id slice that ends inside a character decodes to U+FFFD there, and no
 * state leaks into the next call (gpt-tokenizer's `decode` keeps a shared streaming decoder). */
const utf8Decoder = new TextDecoder('utf-8', { fatal: false, ignoreBOM: true });

function decodeIds(table: RankTable, ids: readonly number[]): Uint8Array {
  let total = 0;
  const parts: Uint8Array[] = new Array<Uint8Array>(ids.length);
  for (let i = 0; i < ids.length; i++) {
    const b = table.bytesOf(ids[i]!);
    if (!b) throw new Error(`Token id ${ids[i]} is not an ordinary token of this encoding`);
    parts[i] = b;
    total += b.length;
  }
  return concatBytes(parts, total);
}

interface EncodingModules {
  mod: GptTokenizerModule;
  raw: RawRanks;
}

async function loadModules(name: EncodingName): Promise<EncodingModules> {
  // The encoding module imports the same bpeRanks module, so the vocabulary array is shared, not loaded twice.
  if (name === 'cl100k_base') {
    const [mod, ranks] = await Promise.all([
      import('gpt-tokenizer/encoding/cl100k_base'),
      import('gpt-tokenizer/bpeRanks/cl100k_base'),
    ]);
    return { mod: mod as unknown as GptTokenizerModule, raw: ranks.default };
  }
  const [mod, ranks] = await Promise.all([
    import('gpt-tokenizer/encoding/o200k_base'),
    import('gpt-tokenizer/bpeRanks/o200k_base'),
  ]);
  return { mod: mod as unknown as GptTokenizerModule, raw: ranks.default };
}

const loaded = new Map<EncodingName, Promise<Encoder>>();

export function loadEncoder(name: EncodingName): Promise<Encoder> {
  let p = loaded.get(name);
  if (!p) {
    p = loadModules(name).then(({ mod, raw }) => wrap(name, mod, raw));
    loaded.set(name, p);
  }
  return p;
}
