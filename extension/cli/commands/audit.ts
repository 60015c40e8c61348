/** `spillway audit <log>`: the per-turn ledger as text, JSON (`spillway.audit/1`) or HTML. */
import type { Command } from 'commander';
import { auditItems } from '../../core/audit/audit';
import { auditFileParallel, PARALLEL_MIN_BYTES, type ParallelContext } from '../../core/audit/parallel';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { readLog, readLogLines, type ReadOptions } from '../../core/log/reader';
import { detectFormat } from '../../core/import/detect';
import { importedLogItems } from '../../core/import/index';
import { renderHtmlReport } from '../../core/audit/html';
import { formatAnalysisSummary, formatSummary, formatTable, TEXT_COLUMNS, textRow } from '../../core/audit/text';
import type { AuditOptions, AuditReport } from '../../core/audit/types';
import { isEncodingName, ENCODINGS } from '../../core/tokens/encoder';
import { parsePlan, PlanError } from '../../core/pack/plans';
import { atomicWriter, EXIT, headLines, openLog, parseTokens, stdoutWriter, UsageError, type AtomicWriter } from '../io';

export interface AuditCliOptions {
  budget?: string;
  reserve?: string;
  encoding?: string;
  plan?: string;
  format: 'text' | 'json' | 'html';
  out?: string;
  failOnClippedTop?: boolean;
  failOnOverBudget?: boolean;
  failOnMalformed?: boolean;
  maxLineBytes?: string;
  from?: string;
  quiet?: boolean;
  /** commander's --no-analysis */
  analysis?: boolean;
}

/** Turns CLI strings into validated audit options (exit 2 on bad values). */
export function auditOptionsFrom(o: { budget?: string; reserve?: string; encoding?: string; plan?: string }): AuditOptions {
  const opts: AuditOptions = {};
  if (o.budget !== undefined) opts.budget = parseTokens(o.budget, '--budget');
  if (o.reserve !== undefined) opts.reserve = parseTokens(o.reserve, '--reserve');
  if (o.encoding !== undefined) {
    if (!isEncodingName(o.encoding)) throw new UsageError(`unknown encoding "${o.encoding}" (valid: ${ENCODINGS.join(', ')})`);
    opts.encoding = o.encoding;
  }
  if (o.plan !== undefined) {
    try {
      opts.plan = parsePlan(o.plan).name;
    } catch (e) {
      if (e instanceof PlanError) throw new UsageError(e.message);
      throw e;
    }
  }
  return opts;
}

const TEXT_STREAM_AFTER = 2000;

const FORMATS = ['auto', 'spillway', 'chat', 'otlp'] as const;

/** Reads a Spillway log as it is, or a chat / OTLP log converted in memory (the file is never touched). */
async function logItems(file: string, from: string | undefined, chunks: AsyncIterable<Uint8Array>, read: ReadOptions | undefined) {
  const want = from ?? 'auto';
  if (!(FORMATS as readonly string[]).includes(want)) throw new UsageError(`--from must be one of ${FORMATS.join(', ')}, got "${want}"`);
  const format = want === 'auto' ? (detectFormat(await headLines(file)) ?? 'spillway') : want;
  if (format === 'spillway') return readLog(chunks, read);
  return importedLogItems(readLogLines(chunks, read), format as 'chat' | 'otlp');
}

/**
 * Worker threads for a log of `size` bytes: 0 (single thread) below PARALLEL_MIN_BYTES, else the default.
 * SPILLWAY_AUDIT_WORKERS=n forces n workers (0: single thread) whatever the size.
 */
function auditWorkers(size: number): number | undefined {
  const env = process.env['SPILLWAY_AUDIT_WORKERS'];
  if (env !== undefined && env !== '' && Number.isInteger(Number(env))) return Math.max(0, Number(env)) || 0;
  return size > PARALLEL_MIN_BYTES ? undefined : 0;
}

type ParallelExtras = Pick<ParallelContext, 'onLedgerBytes' | 'ledgerSeparator'>;

async function auditStream(file: string, from: string | undefined, chunks: AsyncIterable<Uint8Array>, opts: Parameters<typeof auditItems>[1], ctx: Parameters<typeof auditItems>[2] = {}, size = 0, extras: ParallelExtras = {}) {
  const workers = auditWorkers(size);
  const workerScript = join(__dirname, 'auditWorker.js');
  if (workers !== 0 && (from ?? 'auto') !== 'chat' && (from ?? 'auto') !== 'otlp' && existsSync(workerScript)) {
    const format = (from ?? 'auto') === 'auto' ? (detectFormat(await headLines(file)) ?? 'spillway') : from;
    // Identical report to the single-thread path (test/core/audit/parallel.test.ts), on every core.
    if (format === 'spillway') return auditFileParallel(file, opts, { ...ctx, ...extras, workerScript, ...(workers === undefined ? {} : { workers }) });
  }
  return logItems(file, from, chunks, ctx.read).then((items) => auditItems(items, opts, ctx));
}

export async function runAudit(file: string, o: AuditCliOptions): Promise<number> {
  if (!['text', 'json', 'html'].includes(o.format)) throw new UsageError(`--format must be text, json or html, got "${o.format}"`);
  const opts = auditOptionsFrom(o);
  const { chunks, size } = await openLog(file);
  const out: AtomicWriter = o.out ? atomicWriter(o.out) : stdoutWriter();
  const progress = !o.quiet && process.stderr.isTTY && size > 50e6;
  try {
    let report: AuditReport;
    const read = o.maxLineBytes ? { maxLineBytes: parseTokens(o.maxLineBytes, '--max-line-bytes') } : undefined;
    const analysis = o.analysis !== false;
    const onProgress = progress ? (done: number, bytes?: number) => bytes !== undefined && process.stderr.write(`\r${done} records, ${((100 * bytes) / size).toFixed(1)}%`) : undefined;
    if (o.format === 'json') {
      // Streamed: one record at a time, so a 1 GB log does not build a 1 GB report in memory.
      let first = true;
      await out.write(`{"schema":"spillway.audit/1","file":${JSON.stringify(file)},"options":${JSON.stringify(opts)},"records":[\n`);
      report = await auditStream(file, o.from, chunks, { ...opts, file }, {
        read,
        onProgress,
        analysis,
        // Waits while the output is behind, so ledgers do not pile up in memory.
        drain: () => out.write(''),
        onLedgerJson: (json: string) => {
          out.push((first ? '' : ',\n') + json);
          first = false;
        },
      }, size, {
        // The parallel path: ledgers arrive already joined and encoded by the workers.
        ledgerSeparator: ',\n',
        onLedgerBytes: (bytes: Uint8Array) => out.push(bytes),
      });
      const tail = report.analysisSummary ? `,"analysisSummary":${JSON.stringify(report.analysisSummary)}` : '';
      await out.write(`\n],"errors":${JSON.stringify(report.errors)},"summary":${JSON.stringify(report.summary)}${tail}}\n`);
    } else if (o.format === 'text') {
      const rows: string[][] = [];
      report = await auditStream(file, o.from, chunks, { ...opts, file }, { read, onProgress, analysis, onLedger: (l) => rows.push(textRow(l)) }, size);
      const shown = rows.length > TEXT_STREAM_AFTER ? rows.slice(0, TEXT_STREAM_AFTER) : rows;
      await out.write(formatTable(shown, TEXT_COLUMNS) + '\n');
      if (rows.length > shown.length) await out.write(`… ${rows.length - shown.length} more turns (use --format json for all of them)\n`);
      await out.write('\n' + formatSummary(report.summary, report.errors) + '\n');
      if (report.analysisSummary) await out.write(formatAnalysisSummary(report.analysisSummary) + '\n');
    } else {
      report = await auditStream(file, o.from, chunks, { ...opts, file }, { read, onProgress, analysis });
      await out.write(renderHtmlReport(report));
    }
    if (progress) process.stderr.write('\n');
    await out.commit();
    if (o.out && !o.quiet) process.stderr.write(`wrote ${o.out}${o.format === 'html' ? ' (may contain personal data from the log: share with care)' : ''}\n`);
    const s = report.summary;
    if (o.failOnClippedTop && s.rank1Clipped + s.rank1Dropped > 0) return EXIT.threshold;
    if (o.failOnOverBudget && s.overBudget > 0) return EXIT.threshold;
    if (o.failOnMalformed && s.malformed > 0) return EXIT.threshold;
    return EXIT.ok;
  } catch (e) {
    await out.abort();
    throw e;
  }
}

export function registerAudit(program: Command, setExit: (code: number) => void): void {
  program
    .command('audit')
    .description('exact per-turn token ledger of a log: budget split, kept/clipped/dropped segments, cut points')
    .argument('<log>', 'a Spillway log (.jsonl / .ndjson)')
    .option('--budget <tokens>', 'what-if: budget in tokens (8192 or 8k); overrides window − reserve')
    .option('--reserve <tokens>', 'what-if: output reserve in tokens')
    .option('--encoding <name>', `what-if: tokenizer encoding (${ENCODINGS.join(', ')})`)
    .option('--plan <plan>', 'what-if: packing plan (default: each record\'s own, else recent-first)')
    .option('--format <format>', 'text, json or html', 'text')
    .option('--out <file>', 'write the report here (atomically) instead of stdout')
    .option('--fail-on-clipped-top', 'exit 1 if any turn clipped or dropped its rank-1 passage')
    .option('--fail-on-over-budget', 'exit 1 if any turn is over budget')
    .option('--fail-on-malformed', 'exit 1 if any line is malformed')
    .option('--max-line-bytes <n>', 'skip (and report) lines longer than this')
    .option('--from <format>', 'input shape: auto (recognise), spillway, chat (chat-message requests) or otlp (OpenTelemetry GenAI traces); imports are converted in memory', 'auto')
    .option('--quiet', 'no progress or notices on stderr')
    .option('--no-analysis', 'skip the grounding analysis (reply support, BM25, near-duplicates, position, staleness)')
    .action(async (log: string, o: AuditCliOptions) => setExit(await runAudit(log, o)));
}
