/** `spillway sweep <log> --budgets 4k,8k --plans a,b [--k 3,5,10]`: evidence retention and tokens per option. */
import type { Command } from 'commander';
import { readLog } from '../../core/log/reader';
import { sweep, SweepCancelled, type SweepResult } from '../../core/repack/sweep';
import { formatTable } from '../../core/audit/text';
import { parsePlan, PlanError } from '../../core/pack/plans';
import { withTop } from '../../core/pack/plans/spec';
import { ENCODINGS, isEncodingName } from '../../core/tokens/encoder';
import { EXIT, openLog, parseTokens, UsageError } from '../io';
import { pricesFrom, progressReporter, withInterrupt } from './repack';

export interface SweepCliOptions {
  budgets?: string;
  plans: string;
  k?: string;
  reserve?: string;
  encoding?: string;
  pricePerMillion?: string;
  format: 'text' | 'json';
  quiet?: boolean;
}

const list = (s: string): string[] => s.split(',').map((x) => x.trim()).filter(Boolean);

export function formatSweep(r: SweepResult): string {
  const priced = r.cells.some((c) => c.costPer1000Turns !== undefined);
  const rows = r.cells.map((c) => [
    String(c.budget),
    c.plan,
    c.k === null ? '—' : String(c.k),
    c.evidenceRetention === null ? '—' : `${(100 * c.evidenceRetention).toFixed(1)}%`,
    `${c.evidenceWhole}/${c.evidenceTurns}`,
    c.meanTokens.toFixed(0),
    String(c.rank1Lost),
    String(c.overBeforePassages),
    ...(priced ? [c.costPer1000Turns == null ? '—' : c.costPer1000Turns.toFixed(4)] : []),
  ]);
  const head = ['budget', 'plan', 'k', 'evidence kept', 'evidence whole', 'tokens/turn', 'rank-1 cut', 'over before passages', ...(priced ? ['cost/1k turns'] : [])];
  return `${formatTable(rows, head)}\n\n${r.records} records, ${r.malformed} malformed line${r.malformed === 1 ? '' : 's'}`;
}

export async function runSweep(file: string, o: SweepCliOptions): Promise<number> {
  if (!o.budgets) throw new UsageError('--budgets is required (e.g. --budgets 4k,8k,16k,32k)');
  if (!['text', 'json'].includes(o.format)) throw new UsageError(`--format must be text or json, got "${o.format}"`);
  const budgets = list(o.budgets).map((b) => parseTokens(b, '--budgets'));
  const plans = list(o.plans);
  const ks = o.k ? list(o.k).map((k) => parseTokens(k, '--k')) : undefined;
  if (o.encoding !== undefined && !isEncodingName(o.encoding)) throw new UsageError(`unknown encoding "${o.encoding}" (valid: ${ENCODINGS.join(', ')})`);
  const reserve = o.reserve !== undefined ? parseTokens(o.reserve, '--reserve') : undefined;
  const prices = pricesFrom(o.pricePerMillion);
  // Plans are checked before the log is opened (exit 2 with the valid list).
  try {
    for (const p of plans) for (const k of ks ?? [null]) parsePlan(k === null ? p : withTop(p, k));
  } catch (e) {
    throw new UsageError((e as Error).message);
  }
  const { chunks, size } = await openLog(file);
  const t0 = performance.now();
  let r: SweepResult;
  try {
    r = await withInterrupt((signal) =>
      sweep(readLog(chunks), { budgets, plans, ks, reserve, encoding: o.encoding, prices }, { signal, onProgress: progressReporter(size, o.quiet, 'sweep') }),
    );
  } catch (e) {
    if (e instanceof PlanError) throw new UsageError(e.message);
    if (e instanceof SweepCancelled) {
      process.stderr.write('\nspillway: sweep cancelled\n');
      return 130;
    }
    if (e instanceof Error && /already has top:K/.test(e.message)) throw new UsageError(e.message);
    throw e;
  }
  const secs = (performance.now() - t0) / 1000;
  if (o.format === 'json') process.stdout.write(JSON.stringify({ ...r, file, seconds: secs }) + '\n');
  else process.stdout.write(formatSweep(r) + `; ${budgets.length * plans.length * (ks?.length ?? 1)} options in ${secs.toFixed(1)} s\n`);
  return EXIT.ok;
}

export function registerSweep(program: Command, setExit: (code: number) => void): void {
  program
    .command('sweep')
    .description('evidence retention and tokens spent for every budget × plan (× k) over a whole log')
    .argument('<log>', 'a Spillway log (.jsonl / .ndjson)')
    .option('--budgets <list>', 'budgets in tokens, comma-separated (4k,8k,16k,32k)')
    .option('--plans <list>', 'packing plans, comma-separated', 'recent-first')
    .option('--k <list>', 'passage counts: each plan also runs with +top:k for each k')
    .option('--reserve <tokens>', 'output reserve (default: each record\'s own)')
    .option('--encoding <name>', `tokenizer encoding (${ENCODINGS.join(', ')})`)
    .option('--price-per-million <prices>', 'input price per million tokens: a number, or model=price,model=price')
    .option('--format <format>', 'text or json (spillway.sweep/1)', 'text')
    .option('--quiet', 'no progress on stderr')
    .action(async (log: string, o: SweepCliOptions) => setExit(await runSweep(log, o)));
}
