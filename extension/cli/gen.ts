/**
 * `npm run gen -- --turns N --seed S [--out FILE] [--mb M]`: writes a deterministic sample log
 * (see extension/core/sample/generator.ts) to stdout or, atomically (temp file + rename), to FILE.
 */
import { Command, InvalidArgumentError } from 'commander';
import { createWriteStream, openSync, renameSync, rmSync, type WriteStream } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { GenerationalMemo } from '../core/cache/generational';
import { generateLog, type BudgetChoice, type GeneratorOptions, type ModelChoice } from '../core/sample/generator';
import { isEncodingName, loadEncoder, type Encoder, type EncodingName } from '../core/tokens/encoder';

function positiveInt(value: string): number {
  const n = Number(value);
  if (!Number.isInteger(n) || n < 0) throw new InvalidArgumentError('expected a non-negative integer');
  return n;
}
function positiveNumber(value: string): number {
  const n = Number(value);
  if (!Number.isFinite(n) || n <= 0) throw new InvalidArgumentError('expected a positive number');
  return n;
}
function rate(value: string): number {
  const n = Number(value);
  if (!Number.isFinite(n) || n < 0 || n > 1) throw new InvalidArgumentError('expected a number from 0 to 1');
  return n;
}

function budgetList(value: string): BudgetChoice[] {
  return value.split(',').map((item) => {
    const m = /^\s*(\d+)\/(\d+)\s*$/.exec(item);
    const window = Number(m?.[1]);
    const reserve = Number(m?.[2]);
    if (!m || window <= 0 || reserve >= window) throw new InvalidArgumentError(`expected WINDOW/RESERVE pairs with reserve < window, e.g. 4096/512,8192/1024 (got "${item}")`);
    return { window, reserve };
  });
}
function modelList(value: string): ModelChoice[] {
  return value.split(',').map((item) => {
    const [name, encoding, weight = '1'] = item.trim().split(':');
    if (!name || !encoding || !isEncodingName(encoding) || !(Number(weight) > 0))
      throw new InvalidArgumentError(`expected NAME:ENCODING[:WEIGHT] with encoding cl100k_base or o200k_base (got "${item}")`);
    return { name, encoding, weight: Number(weight) };
  });
}

interface GenFlags {
  budgets?: BudgetChoice[];
  models?: ModelChoice[];
  turns?: number;
  seed: number;
  out?: string;
  mb?: number;
  malformed: boolean;
  malformedRate?: number;
  usage: boolean;
  concurrency?: number;
  minTurns?: number;
  maxTurns?: number;
  progress: boolean;
}

/** Writes one chunk, waiting for the stream to drain (or fail) so memory stays bounded. */
function write(stream: NodeJS.WritableStream, chunk: string): Promise<void> | undefined {
  if (stream.write(chunk)) return undefined;
  return new Promise((resolve, reject) => {
    const onDrain = (): void => {
      stream.off('error', onError);
      resolve();
    };
    const onError = (err: Error): void => {
      stream.off('drain', onDrain);
      reject(err);
    };
    stream.once('drain', onDrain);
    stream.once('error', onError);
  });
}

async function run(flags: GenFlags): Promise<void> {
  const encoders = new Map<EncodingName, Encoder>();
  if (flags.usage) for (const name of ['o200k_base', 'cl100k_base'] as const) encoders.set(name, await loadEncoder(name));
  // History and passages repeat, so a bounded memo of counts keeps the usage figures cheap.
  const memo = new GenerationalMemo<string, number>(50_000);
  const count = (text: string, enc: EncodingName): number => memo.getOr(enc + '\u0000' + text, () => (encoders.get(enc) as Encoder).count(text));
  const maxBytes = flags.mb === undefined ? undefined : Math.round(flags.mb * 1024 * 1024);
  const options: GeneratorOptions = {
    seed: flags.seed,
    turns: flags.turns ?? (maxBytes === undefined ? 1000 : undefined),
    maxBytes,
    malformedRate: flags.malformed ? flags.malformedRate : 0,
    count: flags.usage ? count : undefined,
    concurrency: flags.concurrency,
    minTurns: flags.minTurns,
    maxTurns: flags.maxTurns,
    budgets: flags.budgets,
    models: flags.models,
  };

  let sink: NodeJS.WritableStream = process.stdout;
  let streamError: Error | undefined;
  let file: WriteStream | undefined;
  let temp: string | undefined;
  if (flags.out) {
    temp = join(dirname(flags.out), `.${basename(flags.out)}.${process.pid}.tmp`);
    // Open synchronously so an unwritable destination fails at once with a plain message.
    file = createWriteStream(temp, { fd: openSync(temp, 'w') });
    file.on('error', (err) => {
      streamError = err;
    });
    sink = file;
  }
  const cleanUp = (): void => {
    if (temp) rmSync(temp, { force: true });
  };
  // A closed pipe (e.g. `| head`) ends the run quietly.
  process.stdout.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(0);
    throw err;
  });
  process.once('SIGINT', () => {
    cleanUp();
    process.exit(130);
  });

  const showProgress = flags.progress && (maxBytes === undefined || maxBytes >= 10 * 1024 * 1024 || (flags.turns ?? 0) >= 20_000);
  const started = Date.now();
  let bytes = 0;
  let lines = 0;
  let nextReport = 16 * 1024 * 1024;
  try {
    for (const line of generateLog(options)) {
      const chunk = line + '\n';
      bytes += Buffer.byteLength(chunk);
      lines++;
      const wait = write(sink, chunk);
      if (wait) await wait;
      if (streamError) throw streamError;
      if (showProgress && bytes >= nextReport) {
        nextReport += 16 * 1024 * 1024;
        const s = (Date.now() - started) / 1000;
        const target = maxBytes ? ` of ${(maxBytes / 1048576).toFixed(0)} MB` : '';
        process.stderr.write(`gen: ${(bytes / 1048576).toFixed(0)} MB${target}, ${lines} lines, ${(bytes / 1048576 / s).toFixed(1)} MB/s\n`);
      }
    }
    if (file && temp && flags.out) {
      const f = file;
      await new Promise<void>((resolve, reject) => f.end((err?: Error | null) => (err ? reject(err) : resolve())));
      renameSync(temp, flags.out);
      process.stderr.write(`gen: wrote ${lines} lines, ${(bytes / 1048576).toFixed(1)} MB to ${flags.out}\n`);
    }
  } catch (err) {
    cleanUp();
    throw err;
  }
}

const program = new Command('gen')
  .description('Write a deterministic sample Spillway log (format v1) with realistic repetition.')
  .requiredOption('--seed <n>', 'seed of the generator (same seed, same bytes)', positiveInt)
  .option('--turns <n>', 'number of lines (records) to write; default 1000, or unlimited with --mb', positiveInt)
  .option('--mb <m>', 'stop after about M megabytes (MiB)', positiveNumber)
  .option('--out <file>', 'write to FILE atomically (temp file beside it, then rename) instead of stdout')
  .option('--malformed-rate <p>', 'probability that a line is malformed (default 1/50000)', rate)
  .option('--no-malformed', 'write no malformed lines')
  .option('--no-usage', 'write no API-style usage (skips token counting; faster)')
  .option('--concurrency <n>', 'conversations open at once (records interleave)', positiveInt)
  .option('--min-turns <n>', 'fewest turns per conversation (default 3)', positiveInt)
  .option('--max-turns <n>', 'most turns per conversation (default 40)', positiveInt)
  .option('--budgets <list>', 'window/reserve choices, e.g. 2048/512,4096/512,8192/1024,16384/2048 (the default)', budgetList)
  .option('--models <list>', 'model choices NAME:ENCODING[:WEIGHT], e.g. gpt-4o-mini:o200k_base:6,gpt-4o:o200k_base:2,gpt-4:cl100k_base:2 (the default)', modelList)
  .option('--no-progress', 'no progress lines on stderr')
  // Usage errors exit 2 (as the spillway CLI does); --help exits 0.
  .exitOverride((err) => process.exit(err.exitCode === 0 ? 0 : 2))
  .action(async (flags: GenFlags) => {
    try {
      await run(flags);
    } catch (err) {
      process.stderr.write(`gen: ${(err as Error).message}\n`);
      process.exitCode = 2;
    }
  });

program.parseAsync(process.argv).catch((err: unknown) => {
  process.stderr.write(`gen: ${(err as Error).message}\n`);
  process.exitCode = 2;
});
