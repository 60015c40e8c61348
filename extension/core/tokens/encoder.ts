/**
 * Exact BPE encoders, loaded lazily (the rank tables are large: nothing is parsed until a log needs it).
 * Special-token strings inside text (e.g. "<|endoftext|>") are encoded as ordinary text, the way an
 * API encodes message content.
 */
export const ENCODINGS = ['cl100k_base', 'o200k_base'] as const;
export type EncodingName = (typeof ENCODINGS)[number];

export interface Encoder {
  readonly name: EncodingName;
  encode(text: string): number[];
  count(text: string): number;
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
  decode(ids: Iterable<number>): string;
}

function wrap(name: EncodingName, mod: GptTokenizerModule): Encoder {
  return {
    name,
    encode: (text) => mod.encode(text, NO_SPECIAL),
    count: (text) => mod.countTokens(text, NO_SPECIAL),
    decode: (ids) => mod.decode(ids),
  };
}

const loaded = new Map<EncodingName, Promise<Encoder>>();

export function loadEncoder(name: EncodingName): Promise<Encoder> {
  let p = loaded.get(name);
  if (!p) {
    p =
      name === 'cl100k_base'
        ? import('gpt-tokenizer/encoding/cl100k_base').then((m) => wrap(name, m as unknown as GptTokenizerModule))
        : import('gpt-tokenizer/encoding/o200k_base').then((m) => wrap(name, m as unknown as GptTokenizerModule));
    loaded.set(name, p);
  }
  return p;
}
