/** `spillway repack <log> --budget N … --out FILE`: the log packed again, written atomically beside it, and a comparison. */
import type { Command } from 'commander';
import { auditOptionsFrom } from './audit';
import { readLogForRepack, repackLines, RepackCancelled } from '../../core/repack/repack';
import { ComparisonTotalsBuilder, worseFirst, type TurnComparison } from '../../core/repack/compare';
import { parsePrices } from '../../core/repack/cost';
import type { Prices } from '../../core/repack/types';
import { atomicWriter, checkOutputPath, EXIT, openLog, UsageError } from '../io';
import { formatComparison } from './compare';

export interface RepackCliOptions {
  budget?: string;
  reserve?: string;
  encoding?: string;
  plan?: string;
  out?: string;
  force?: boolean;
  comparison?: string;
  format: 'text' | 'json';
  pricePerMillion?: string;
  quiet?: boolean;
}

export function pricesFrom(s: string | undefined): Prices | undefined {
  if (s === undefined) return undefined;
  try {
    return parsePrices(s);
  } catch (e) {
    throw new UsageError(`--price-per-million: ${(e as Error).message}`);
  }
}

/** Progress on stderr: a rewritten line on a terminal, a line every 10,000 records otherwise. */
export function progressReporter(size: number, quiet: boolean | undefined, what: string): ((done: number, bytes?: number) => void) | undefined {
  if (quiet) return undefined;
  const tty = process.stderr.isTTY;
  let lastLine = 0;
  return (done, bytes) => {
    const pct = bytes !== undefined && size > 0 ? `, ${((100 * bytes) / size).toFixed(1)}%` : '';
    if (tty) process.stderr.write(`\r${what}: ${done} records${pct}   `);
    else if (done - lastLine >= 10_000 || bytes === undefined) {
      lastLine = done;
      process.stderr.write(`${what}: ${done} records${pct}\n`);
    }
  };
}

/** Runs `body` with an AbortSignal that SIGINT triggers (the handler is removed afterwards). */
export async function withInterrupt<T>(body: (signal: AbortSignal) => Promise<T>): Promise<T> {
  const ac = new AbortController();
  const onInt = (): void => ac.abort();
  process.on('SIGINT', onInt);
  try {
    return await body(ac.signal);
  } finally {
    process.off('SIGINT', onInt);
  }
}

export async function runRepack(file: string, o: RepackCliOptions): Promise<number> {
  if (o.budget === undefined) throw new UsageError('--budget is required (e.g. --budget 8k)');
  if (!o.out) throw new UsageError('--out is required: the re-packed log is written beside the source, never over it');
  if (!['text', 'json'].includes(o.format)) throw new UsageError(`--format must be text or json, got "${o.format}"`);
  const opts = auditOptionsFrom(o);
  const prices = pricesFrom(o.pricePerMillion);
  await checkOutputPath(o.out, file, Boolean(o.force));
  if (o.comparison) await checkOutputPath(o.comparison, file, Boolean(o.force));
  const { chunks, size } = await openLog(file);
  const out = atomicWriter(o.out);
  const cmp = o.comparison ? atomicWriter(o.comparison) : undefined;
  const totals = new ComparisonTotalsBuilder(prices);
  let worse: TurnComparison[] = [];
  let first = true;
  const t0 = performance.now();
  try {
    if (cmp) await cmp.write(`{"schema":"spillway.compare/1","a":${JSON.stringify(file)},"b":${JSON.stringify(o.out)},"turns":[\n`);
    const summary = await withInterrupt((signal) =>
      repackLines(readLogForRepack(chunks), opts, {
        signal,
        onProgress: progressReporter(size, o.quiet, 'repack'),
        write: (line) => out.write(line),
        onComparison: (c) => {
          totals.add(c);
          if (c.worse) {
            worse.push(c);
            if (worse.length > 2000) worse = worse.sort(worseFirst).slice(0, 1000);
          }
          if (cmp) {
            cmp.push((first ? '' : ',\n') + JSON.stringify(c));
            first = false;
          }
        },
      }),
    );
    const secs = (performance.now() - t0) / 1000;
    worse = worse.sort(worseFirst).slice(0, 1000);
    const result = { totals: totals.result(), worse, unmatched: { a: 0, b: 0 }, malformed: { a: summary.malformed, b: 0 } };
    if (cmp) {
      await cmp.write(`\n],"worse":${JSON.stringify(worse.map((w) => ({ line: w.line, conversation: w.conversation, turn: w.turn })))},"totals":${JSON.stringify(result.totals)},"repack":${JSON.stringify(summary)}}\n`);
    }
    await out.commit();
    if (cmp) await cmp.commit();
    if (o.format === 'json') process.stdout.write(JSON.stringify({ schema: 'spillway.repack/1', source: file, out: o.out, options: opts, summary, totals: result.totals, worse: worse.slice(0, 20) }) + '\n');
    else {
      process.stdout.write(formatComparison(result, { a: file, b: o.out }) + '\n');
      process.stdout.write(
        `re-packed ${summary.records} records (${summary.states['over-before-passages']} over before passages; ${summary.malformed} malformed line${summary.malformed === 1 ? '' : 's'}, ${summary.copiedVerbatim} copied verbatim) in ${secs.toFixed(1)} s\n`,
      );
      for (const i of summary.issues.slice(0, 10)) process.stdout.write(`  line ${i.line}:${i.column} ${i.code}: ${i.message}\n`);
    }
    if (!o.quiet) process.stderr.write(`wrote ${o.out}${o.comparison ? ` and ${o.comparison}` : ''} (holds the log's text, which may include personal data)\n`);
    return EXIT.ok;
  } catch (e) {
    await out.abort();
    await cmp?.abort();
    if (e instanceof RepackCancelled) {
      process.stderr.write('\nspillway: re-pack cancelled; no output written\n');
      return 130;
    }
    throw e;
  }
}

export function registerRepack(program: Command, setExit: (code: number) => void): void {
  program
    .command('repack')
    .description('pack every record of a log again under a new budget, reserve, encoding or packing plan; write the new log atomically and compare')
    .argument('<log>', 'a Spillway log (.jsonl / .ndjson); never modified')
    .option('--budget <tokens>', 'new budget in tokens (8192 or 8k): the window is budget + reserve')
    .option('--reserve <tokens>', 'output reserve in tokens (default: each record\'s own)')
    .option('--encoding <name>', 'tokenizer encoding (cl100k_base, o200k_base)')
    .option('--plan <plan>', 'packing plan, e.g. evidence-first, split:60, best-value, recent-first+cap:200+order:edges')
    .option('--out <file>', 'the re-packed log (required; refused if it is the input or exists without --force)')
    .option('--force', 'replace an existing output file')
    .option('--comparison <file>', 'also write the per-turn comparison as JSON (spillway.compare/1)')
    .option('--format <format>', 'summary on stdout: text or json', 'text')
    .option('--price-per-million <prices>', 'input price per million tokens: a number, or model=price,model=price')
    .option('--quiet', 'no progress on stderr')
    .action(async (log: string, o: RepackCliOptions) => setExit(await runRepack(log, o)));
}
