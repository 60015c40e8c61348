/** `spillway compare <a> <b>`: two packings of the same turns, per turn and in total. */
import type { Command } from 'commander';
import { readLog } from '../../core/log/reader';
import { compareLogs, CompareCancelled, type ComparisonTotals, type TurnComparison } from '../../core/repack/compare';
import { formatTable } from '../../core/audit/text';
import { atomicWriter, EXIT, openLog, stdoutWriter, UsageError } from '../io';
import { pricesFrom, progressReporter, withInterrupt } from './repack';

const pct = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : `${(100 * x).toFixed(1)}%`);
const money = (x: number | null | undefined): string => (x === null || x === undefined ? '—' : x.toFixed(4));

const ids = (xs: string[]): string => (xs.length === 0 ? '—' : xs.length <= 3 ? xs.join(' ') : `${xs.slice(0, 3).join(' ')} +${xs.length - 3}`);

function turnRow(c: TurnComparison): string[] {
  return [
    String(c.line),
    `${c.conversation}#${c.turn}`,
    c.evidence ? `${pct(c.evidence.retentionA)} → ${pct(c.evidence.retentionB)}` : '—',
    c.replySupport ? `${pct(c.replySupport.a)} → ${pct(c.replySupport.b)}` : '—',
    ids(c.lost),
    ids(c.gained),
    String(c.historyDropped.length),
    `${c.a.used} → ${c.b.used}`,
  ];
}

/** Plain-text comparison: totals, then the worse turns (worst first). */
export function formatComparison(r: { totals: ComparisonTotals; worse: TurnComparison[]; unmatched: { a: number; b: number }; malformed: { a: number; b: number } }, names: { a: string; b: string }, shown = 50): string {
  const t = r.totals;
  const lines = [
    `a = ${names.a}`,
    `b = ${names.b}`,
    `turns compared: ${t.turns} (changed ${t.changed}, worse ${t.worse}, better ${t.better}); unmatched a ${r.unmatched.a}, b ${r.unmatched.b}; malformed a ${r.malformed.a}, b ${r.malformed.b}`,
    `passages lost ${t.passagesLost}, gained ${t.passagesGained}; history turns dropped ${t.historyTurnsDropped}, gained ${t.historyTurnsGained}`,
    `evidence retention (tokens kept / tokens, ${t.evidenceTurns} turns with evidence): ${pct(t.evidenceRetentionA)} → ${pct(t.evidenceRetentionB)}; evidence sent whole in ${t.evidenceWholeA} → ${t.evidenceWholeB} turns`,
    `reply support (mean share of reply tokens in sent passages): ${pct(t.replySupportA)} → ${pct(t.replySupportB)}`,
    `tokens spent: ${t.tokensA} → ${t.tokensB} (${t.turns ? (t.tokensA / t.turns).toFixed(0) : 0} → ${t.turns ? (t.tokensB / t.turns).toFixed(0) : 0} per turn)`,
  ];
  if (t.costPer1000TurnsA !== undefined) lines.push(`input cost per 1,000 turns: ${money(t.costPer1000TurnsA)} → ${money(t.costPer1000TurnsB)}`);
  if (r.worse.length) {
    lines.push('', `worse turns (worst first${r.worse.length > shown ? `, ${shown} of ${r.worse.length} kept` : ''}):`);
    lines.push(formatTable(r.worse.slice(0, shown).map(turnRow), ['line', 'turn', 'evidence', 'reply support', 'lost', 'gained', 'hist↓', 'tokens']));
  }
  return lines.join('\n');
}

export interface CompareCliOptions {
  format: 'text' | 'json';
  out?: string;
  align: 'key' | 'line';
  pricePerMillion?: string;
  quiet?: boolean;
}

export async function runCompare(a: string, b: string, o: CompareCliOptions): Promise<number> {
  if (!['text', 'json'].includes(o.format)) throw new UsageError(`--format must be text or json, got "${o.format}"`);
  if (!['key', 'line'].includes(o.align)) throw new UsageError(`--align must be key or line, got "${o.align}"`);
  const prices = pricesFrom(o.pricePerMillion);
  const la = await openLog(a);
  const lb = await openLog(b);
  const out = o.out ? atomicWriter(o.out) : stdoutWriter();
  try {
    let first = true;
    if (o.format === 'json') await out.write(`{"schema":"spillway.compare/1","a":${JSON.stringify(a)},"b":${JSON.stringify(b)},"turns":[\n`);
    const progress = progressReporter(la.size, o.quiet, 'compare');
    const r = await withInterrupt((signal) =>
      compareLogs(readLog(la.chunks), readLog(lb.chunks), { align: o.align, prices }, {
        signal,
        onProgress: progress ? (d) => progress(d) : undefined,
        onTurn:
          o.format === 'json'
            ? (c) => {
                out.push((first ? '' : ',\n') + JSON.stringify(c));
                first = false;
              }
            : () => undefined,
      }),
    );
    if (o.format === 'json') {
      await out.write(`\n],"worse":${JSON.stringify(r.worse.map((w) => ({ line: w.line, conversation: w.conversation, turn: w.turn })))},"totals":${JSON.stringify(r.totals)},"unmatched":${JSON.stringify(r.unmatched)},"malformed":${JSON.stringify(r.malformed)},"issues":${JSON.stringify(r.issues)}}\n`);
    } else await out.write(formatComparison(r, { a, b }) + '\n');
    await out.commit();
    if (o.out && !o.quiet) process.stderr.write(`wrote ${o.out} (holds ids and figures from the logs, which may include personal data)\n`);
    return EXIT.ok;
  } catch (e) {
    await out.abort();
    if (e instanceof CompareCancelled) {
      process.stderr.write('\nspillway: comparison cancelled; no output written\n');
      return 130;
    }
    throw e;
  }
}

export function registerCompare(program: Command, setExit: (code: number) => void): void {
  program
    .command('compare')
    .description('compare two packings of the same turns: passages lost/gained, history dropped, evidence retention, reply support')
    .argument('<a>', 'the first log (e.g. the original)')
    .argument('<b>', 'the second log (e.g. its re-pack)')
    .option('--format <format>', 'text or json (spillway.compare/1)', 'text')
    .option('--out <file>', 'write the comparison here (atomically) instead of stdout')
    .option('--align <how>', 'pair records by key (conversation, turn) or by line order', 'key')
    .option('--price-per-million <prices>', 'input price per million tokens: a number, or model=price,model=price')
    .option('--quiet', 'no progress on stderr')
    .action(async (a: string, b: string, o: CompareCliOptions) => setExit(await runCompare(a, b, o)));
}
