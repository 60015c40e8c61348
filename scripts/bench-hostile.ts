/**
 * Hostile-text benchmark (issue 10): time to count one string of n characters, plain gpt-tokenizer
 * `countTokens` ("before") against Spillway's encoder ("after"), and whether our ids equal the reference
 * encoder's (tiktoken WASM). Importable by scripts/bench.ts (`runHostileBench`), or standalone:
 * `npm run bench:hostile` (bundled by scripts/build-hostile.mjs).
 *
 * The texts are deterministic (fixed-seed generator), so the reference ids at n = 100,000 — which take
 * tiktoken 11–24 s per row — are stored as hashes in test/fixtures/tokens/hostile-reference.json by
 * test/fixtures/tokens/make-hostile-reference.ts; smaller sizes are checked live when tiktoken is installed.
 */
import { createHash } from 'node:crypto';
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { loadEncoder, type EncodingName } from '../extension/core/tokens/encoder';
import { LONG_PIECE_THRESHOLD } from '../extension/core/tokens/bpe/exactEncode';

/** Park–Miller minimal standard generator: deterministic across machines and Node versions. */
function lcg(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => {
    s = (s * 16807) % 2147483647;
    return (s - 1) / 2147483646;
  };
}

export interface HostileRow {
  id: string;
  label: string;
  make(n: number): string;
}

export const HOSTILE_ROWS: readonly HostileRow[] = [
  { id: 'letter', label: 'one letter repeated', make: (n) => 'a'.repeat(n) },
  { id: 'spaces', label: 'spaces only', make: (n) => ' '.repeat(n) },
  {
    id: 'cjk',
    label: 'CJK without spaces',
    make: (n) => {
      // Uniform over the CJK Unified Ideographs block U+4E00–U+9FA5 (many rare characters → byte tokens).
      const r = lcg(11);
      const codes = new Array<number>(n);
      for (let i = 0; i < n; i++) codes[i] = 0x4e00 + Math.floor(r() * 0x51a6);
      return fromCodes(codes);
    },
  },
  {
    id: 'random',
    label: 'random letters, no spaces',
    make: (n) => {
      const r = lcg(23);
      const codes = new Array<number>(n);
      for (let i = 0; i < n; i++) codes[i] = 97 + Math.floor(r() * 26);
      return fromCodes(codes);
    },
  },
  {
    id: 'base64',
    label: 'base64',
    make: (n) => {
      const r = lcg(37);
      const bytes = new Uint8Array(Math.ceil((n * 3) / 4) + 3);
      for (let i = 0; i < bytes.length; i++) bytes[i] = Math.floor(r() * 256);
      return Buffer.from(bytes).toString('base64').slice(0, n);
    },
  },
];

function fromCodes(codes: number[]): string {
  let s = '';
  for (let i = 0; i < codes.length; i += 8192) s += String.fromCharCode(...codes.slice(i, i + 8192));
  return s;
}

export const HOSTILE_SIZES = [1_000, 10_000, 100_000] as const;

/** sha256 of the ids as decimal numbers joined by ","; the fixture stores this, not the ids. */
export function idsHash(ids: ArrayLike<number>): string {
  const h = createHash('sha256');
  const CHUNK = 4096;
  for (let i = 0; i < ids.length; i += CHUNK) {
    const part: number[] = [];
    for (let j = i; j < Math.min(ids.length, i + CHUNK); j++) part.push(ids[j]!);
    h.update((i > 0 ? ',' : '') + part.join(','));
  }
  return h.digest('hex');
}

export function textHash(text: string): string {
  return createHash('sha256').update(text, 'utf8').digest('hex');
}

export interface ReferenceRow {
  encoding: EncodingName;
  row: string;
  n: number;
  textSha256: string;
  count: number;
  idsSha256: string;
}

export interface ReferenceFile {
  generatedBy: string;
  reference: string;
  rows: ReferenceRow[];
}

export const REFERENCE_PATH = join('test', 'fixtures', 'tokens', 'hostile-reference.json');

export function readReference(root = process.cwd()): ReferenceFile | undefined {
  const p = join(root, REFERENCE_PATH);
  return existsSync(p) ? (JSON.parse(readFileSync(p, 'utf8')) as ReferenceFile) : undefined;
}

interface TiktokenLike {
  encode_ordinary(text: string): Uint32Array;
  free(): void;
}

async function loadReference(name: EncodingName): Promise<TiktokenLike | undefined> {
  try {
    const tk = (await import('tiktoken')) as unknown as { get_encoding(n: string): TiktokenLike };
    return tk.get_encoding(name);
  } catch {
    return undefined; // tiktoken is a devDependency; without it the column says so
  }
}

interface PlainCounter {
  countTokens(text: string, opts?: unknown): number;
  setMergeCacheSize(size: number): void;
  clearMergeCache(): void;
}

async function loadPlain(name: EncodingName): Promise<PlainCounter> {
  return (
    name === 'cl100k_base'
      ? await import('gpt-tokenizer/encoding/cl100k_base')
      : await import('gpt-tokenizer/encoding/o200k_base')
  ) as unknown as PlainCounter;
}

const NO_SPECIAL = { allowedSpecial: new Set<string>(), disallowedSpecial: new Set<string>() };

/**
 * Which clock the tables use. 'wall' (performance.now) is what a user waits; 'cpu' (process.cpuUsage,
 * user + system) is robust on a shared, overloaded machine where the process is descheduled for long
 * stretches. Both are reported in docs/hostile-text.md with the clock named.
 */
export type BenchClock = 'wall' | 'cpu';
let clock: BenchClock = 'wall';

function now(): number {
  if (clock === 'wall') return performance.now();
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

function time<T>(f: () => T): { ms: number; value: T } {
  const t0 = now();
  const value = f();
  return { ms: now() - t0, value };
}

function fmtMs(ms: number): string {
  return ms >= 1000 ? `${(ms / 1000).toFixed(2)} s` : `${ms.toFixed(ms < 10 ? 1 : 0)} ms`;
}

export interface HostileBenchOptions {
  sizes?: number[];
  encodings?: EncodingName[];
  /** "before" is skipped at a size where 100 × its time at a tenth of that size exceeds this (default 30 s). */
  beforeLimitMs?: number;
  /** Progress lines (default: none). */
  log?: (line: string) => void;
  /** Default 'wall'. */
  clock?: BenchClock;
}

/**
 * Runs the hostile-text table and returns it as Markdown. "after" is the median of 3 runs of
 * `Encoder.count` after one warm-up run (the vocabulary tables are built during loading, reported
 * separately); "before" is one run of gpt-tokenizer's `countTokens` (its merge is quadratic: a repeat
 * would not change the picture and would cost minutes). gpt-tokenizer's piece cache is cleared before
 * every timed run on both sides.
 */
export async function runHostileBench(opts: HostileBenchOptions = {}): Promise<string> {
  const sizes = opts.sizes ?? [...HOSTILE_SIZES];
  const encodings = opts.encodings ?? (['cl100k_base', 'o200k_base'] as EncodingName[]);
  const beforeLimit = opts.beforeLimitMs ?? 30_000;
  const log = opts.log ?? (() => undefined);
  clock = opts.clock ?? 'wall';
  const reference = readReference();
  const lines: string[] = [];
  const notes: string[] = [];
  lines.push(
    `Long-piece threshold: ${LONG_PIECE_THRESHOLD} UTF-16 units. Times: one string of n characters, ${clock === 'wall' ? 'wall-clock' : 'CPU (user + system)'} time.`,
    '',
  );
  for (const name of encodings) {
    const warm = time(() => undefined);
    const loadT = await (async () => {
      const t0 = now();
      const enc = await loadEncoder(name);
      enc.count('\u4e00'.repeat(LONG_PIECE_THRESHOLD + 1)); // builds the byte-rank table once
      return now() - t0 + warm.ms;
    })();
    const enc = await loadEncoder(name);
    const plain = await loadPlain(name);
    const tk = await loadReference(name);
    lines.push(`### ${name}`, '', `Loading the encoder and building its byte-rank table once: ${fmtMs(loadT)}.`, '');
    const header = ['text', ...sizes.flatMap((n) => [`before n=${n.toLocaleString('en')}`, `after n=${n.toLocaleString('en')}`]), 'ids = tiktoken'];
    if (sizes.length >= 2) header.push(`growth exponent ${sizes.at(-2)!.toLocaleString('en')}→${sizes.at(-1)!.toLocaleString('en')} (after)`);
    lines.push(`| ${header.join(' | ')} |`, `|${header.map(() => '---').join('|')}|`);
    for (const row of HOSTILE_ROWS) {
      const cells: string[] = [row.label];
      const afterMs: number[] = [];
      const beforeMs: number[] = [];
      const agreement: string[] = [];
      for (const n of sizes) {
        const text = row.make(n);
        // before
        const prev = beforeMs.at(-1);
        const prevN = sizes[sizes.indexOf(n) - 1];
        const estimate = prev !== undefined && prevN !== undefined ? prev * (n / prevN) ** 2 : 0;
        let before = '';
        let plainCount: number | undefined;
        if (estimate > beforeLimit) {
          before = `skipped (≈${fmtMs(estimate)} est.)`;
          notes.push(
            `${name}, ${row.label}, n=${n}: "before" skipped; quadratic estimate from n=${prevN} (${fmtMs(prev!)} × ${(n / prevN!) ** 2}) = ${fmtMs(estimate)} > ${fmtMs(beforeLimit)}.`,
          );
          beforeMs.push(estimate);
        } else {
          plain.clearMergeCache();
          const b = time(() => plain.countTokens(text, NO_SPECIAL));
          before = fmtMs(b.ms);
          plainCount = b.value;
          beforeMs.push(b.ms);
        }
        // after: warm-up + median of 3
        enc.count(text);
        // Our encoder hands ordinary text to the same gpt-tokenizer module: clear its piece cache before
        // each run so neither side is timed on cache hits from an earlier run of the same text.
        const runs = [0, 1, 2].map(() => {
          plain.clearMergeCache();
          return time(() => enc.count(text));
        });
        runs.sort((a, b) => a.ms - b.ms);
        const after = runs[1]!;
        afterMs.push(after.ms);
        cells.push(before, fmtMs(after.ms));
        // agreement: ids (and count) against the reference
        const ids = enc.encode(text);
        if (ids.length !== after.value) agreement.push(`n=${n}: encode/count mismatch`);
        const ref = reference?.rows.find((r) => r.encoding === name && r.row === row.id && r.n === n);
        if (ref && ref.textSha256 === textHash(text)) {
          agreement.push(`${ref.idsSha256 === idsHash(ids) ? 'yes' : 'NO'} (stored)`);
        } else if (tk && n <= 10_000) {
          agreement.push(idsHash(tk.encode_ordinary(text)) === idsHash(ids) ? 'yes' : 'NO');
        } else {
          agreement.push('not checked');
        }
        if (plainCount !== undefined && plainCount !== ids.length) {
          notes.push(`${name}, ${row.label}, n=${n}: gpt-tokenizer counts ${plainCount}, ours ${ids.length}.`);
        }
        log(`${name} ${row.id} n=${n}: before ${before}, after ${fmtMs(after.ms)}`);
      }
      cells.push(agreement.join(', '));
      if (sizes.length >= 2) {
        const a = afterMs.at(-2)!;
        const b = afterMs.at(-1)!;
        const k = Math.log(b / a) / Math.log(sizes.at(-1)! / sizes.at(-2)!);
        cells.push(k.toFixed(2));
      }
      lines.push(`| ${cells.join(' | ')} |`);
    }
    lines.push('');
    tk?.free();
  }
  if (notes.length) lines.push('Notes:', '', ...notes.map((n) => `- ${n}`), '');
  lines.push(
    'Growth exponent k = log(t_b / t_a) / log(b / a) for the last two sizes a < b: 1 is linear, 2 quadratic; n log n gives ≈ 1.1 from 10,000 to 100,000.',
    '"ids = tiktoken": "(stored)" compares with hashes produced by test/fixtures/tokens/make-hostile-reference.ts running the tiktoken WASM bindings.',
  );
  return lines.join('\n');
}

/**
 * The measurement behind LONG_PIECE_THRESHOLD: time per piece for gpt-tokenizer's own merge (via
 * `countTokens` on a single piece) and for our heap merge (via `Encoder.count`, which routes any piece
 * longer than the threshold to it), on single pieces of the three hostile classes at lengths L.
 * Each figure is CPU time (user + system) over 200 distinct pieces divided by 200, after one warm-up pass;
 * gpt-tokenizer's merge cache is switched off so both sides merge every piece.
 */
export async function runThresholdBench(lengths = [16, 32, 64, 96, 128, 192, 256, 512, 1024]): Promise<string> {
  const { mergeCount } = await import('../extension/core/tokens/bpe/heapMerge');
  const { RankTable, textToBinary } = await import('../extension/core/tokens/bpe/rankTable');
  const raw = (await import('gpt-tokenizer/bpeRanks/o200k_base')).default;
  const table = new RankTable(raw);
  table.rankOfBinary(''); // build
  const plain = await loadPlain('o200k_base');
  const classes: Array<[string, (r: () => number, len: number) => string]> = [
    ['CJK', (r, len) => fromCodes(Array.from({ length: len }, () => 0x4e00 + Math.floor(r() * 0x51a6)))],
    ['random letters', (r, len) => fromCodes(Array.from({ length: len }, () => 97 + Math.floor(r() * 26)))],
    ['letter run', (r, len) => String.fromCharCode(97 + Math.floor(r() * 26)).repeat(len)],
  ];
  const lines = ['| piece class | L | gpt-tokenizer µs/piece | heap merge µs/piece |', '|---|---|---|---|'];
  plain.setMergeCacheSize(0); // compare merges, not cache hits (restored below to the library default)
  for (const [label, make] of classes) {
    for (const L of lengths) {
      const r = lcg(L * 7 + label.length);
      const pieces = Array.from({ length: 200 }, () => make(r, L));
      // CPU time of the whole batch / pieces: robust to the process being descheduled on a busy machine.
      const per = (f: (p: string) => number): number => {
        const u0 = process.cpuUsage();
        for (const p of pieces) f(p);
        const u = process.cpuUsage(u0);
        return (u.user + u.system) / pieces.length;
      };
      per((p) => plain.countTokens(p, NO_SPECIAL)); // warm-up (JIT) for both sides
      per((p) => mergeCount(table, textToBinary(p)));
      const a = per((p) => plain.countTokens(p, NO_SPECIAL));
      const b = per((p) => mergeCount(table, textToBinary(p)));
      lines.push(`| ${label} | ${L} | ${a.toFixed(1)} | ${b.toFixed(1)} |`);
    }
  }
  plain.setMergeCacheSize(100_000);
  return lines.join('\n');
}

async function main(): Promise<void> {
  const args = process.argv.slice(2);
  if (args.includes('--threshold')) {
    process.stdout.write((await runThresholdBench()) + '\n');
    return;
  }
  const sizesArg = args.find((a) => a.startsWith('--sizes='));
  const sizes = sizesArg ? sizesArg.slice('--sizes='.length).split(',').map(Number) : undefined;
  const table = await runHostileBench({
    sizes,
    clock: args.includes('--cpu') ? 'cpu' : 'wall',
    log: (l) => process.stderr.write(l + '\n'),
  });
  process.stdout.write(table + '\n');
}

// Set only by scripts/build-hostile.mjs, so importing this module from scripts/bench.ts runs nothing.
if (process.env.SPILLWAY_HOSTILE_MAIN === '1') {
  main().catch((e: unknown) => {
    process.stderr.write(`${e instanceof Error ? (e.stack ?? e.message) : String(e)}\n`);
    process.exit(1);
  });
}
