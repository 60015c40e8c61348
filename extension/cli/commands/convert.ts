/**
 * `spillway convert <in> --from chat|otlp --out <log>`: writes a version-1 Spillway log from a chat
 * request log or an OTLP/JSON trace file. The input is only read; the output lands atomically.
 */
import type { Command } from 'commander';
import { realpathSync } from 'node:fs';
import { readLogLines } from '../../core/log/reader';
import { convertLines } from '../../core/import/index';
import type { ImportFormat, ImportOptions, SplitterKind, LayoutMode } from '../../core/import/index';
import { formatIssue } from '../../core/import/inspect';
import { checkPattern } from '../../core/import/split';
import { isEncodingName, ENCODINGS } from '../../core/tokens/encoder';
import { atomicWriter, checkOutputPath, EXIT, openLog, parseTokens, UsageError } from '../io';

/** Import flags shared by `convert` and `inspect`. */
export interface ImportCliFlags {
  from?: string;
  splitter?: string;
  tag?: string;
  idAttribute?: string;
  separator?: string;
  pattern?: string;
  layout?: string;
  queryMessage?: string;
  window?: string;
  reserve?: string;
  encoding?: string;
  model?: string;
  sent?: string;
  roleKind?: string[];
}

const SPLITTERS: SplitterKind[] = ['auto', 'tag', 'numbered', 'separator', 'regex', 'none'];
const KINDS = ['instructions', 'history', 'query', 'passage', 'tool'];
const ROLES = ['system', 'developer', 'user', 'assistant', 'tool'];

export function addImportFlags(cmd: Command): Command {
  return cmd
    .option('--splitter <kind>', `how passages are found in a message: ${SPLITTERS.join(', ')}`, 'auto')
    .option('--tag <name>', 'tag name for the tag splitter (<doc id="…">…</doc>)', 'doc')
    .option('--id-attribute <name>', 'attribute holding the passage id for the tag splitter', 'id')
    .option('--separator <line>', 'separator line for the separator splitter', '---')
    .option('--pattern <regex>', 'pattern for the regex splitter, with named groups id, text and optional score')
    .option('--layout <mode>', 'exact (segments re-join to the message byte for byte) or split (one segment per passage, separators normalised)', 'exact')
    .option('--query-message <index>', 'index of the query message (negative counts from the end); default: the last user message')
    .option('--window <tokens>', 'context window when the source does not record one (default 128000)')
    .option('--reserve <tokens>', 'output reserve when the request gives no max tokens (default 4096)')
    .option('--encoding <name>', `encoding when the model name does not give one (${ENCODINGS.join(', ')})`)
    .option('--model <name>', 'model name when the source has none')
    .option('--sent <mode>', 'all-kept (the logged request is what was sent) or none (fates from the packing plan)', 'all-kept')
    .option('--role-kind <role=kind...>', 'override the kind of a role, e.g. --role-kind developer=instructions');
}

/** CLI strings → import format and options; bad values end the CLI with exit 2. */
export function importOptionsFrom(f: ImportCliFlags): { from?: ImportFormat; opts: ImportOptions } {
  let from: ImportFormat | undefined;
  if (f.from !== undefined) {
    if (f.from !== 'chat' && f.from !== 'otlp') throw new UsageError(`--from must be chat or otlp, got "${f.from}"`);
    from = f.from;
  }
  const kind = (f.splitter ?? 'auto') as SplitterKind;
  if (!SPLITTERS.includes(kind)) throw new UsageError(`--splitter must be one of ${SPLITTERS.join(', ')}, got "${f.splitter}"`);
  if (kind === 'regex') {
    const bad = checkPattern(f.pattern, 'm');
    if (bad) throw new UsageError(`--pattern: ${bad}`);
  }
  const opts: ImportOptions = { splitter: { kind, tag: f.tag, idAttribute: f.idAttribute, separator: f.separator, pattern: f.pattern } };
  const layout = (f.layout ?? 'exact') as LayoutMode;
  if (layout !== 'exact' && layout !== 'split') throw new UsageError(`--layout must be exact or split, got "${f.layout}"`);
  opts.layout = layout;
  if (f.queryMessage !== undefined) {
    if (!/^-?\d+$/.test(f.queryMessage)) throw new UsageError(`--query-message must be a whole number, got "${f.queryMessage}"`);
    opts.queryMessage = Number(f.queryMessage);
  }
  if (f.window !== undefined) opts.window = parseTokens(f.window, '--window');
  if (f.reserve !== undefined) opts.reserve = parseTokens(f.reserve, '--reserve');
  if (f.encoding !== undefined) {
    if (!isEncodingName(f.encoding)) throw new UsageError(`unknown encoding "${f.encoding}" (valid: ${ENCODINGS.join(', ')})`);
    opts.encoding = f.encoding;
  }
  if (f.model !== undefined) opts.model = f.model;
  if (f.sent !== undefined) {
    if (f.sent !== 'all-kept' && f.sent !== 'none') throw new UsageError(`--sent must be all-kept or none, got "${f.sent}"`);
    opts.sent = f.sent;
  }
  for (const rk of f.roleKind ?? []) {
    const [role, k] = rk.split('=');
    if (!role || !k || !ROLES.includes(role) || !KINDS.includes(k)) throw new UsageError(`--role-kind must look like role=kind (roles ${ROLES.join(', ')}; kinds ${KINDS.join(', ')}), got "${rk}"`);
    (opts.roleKinds ??= {})[role as 'user'] = k as 'history';
  }
  return { from, opts };
}

export interface ConvertCliOptions extends ImportCliFlags {
  out?: string;
  force?: boolean;
  quiet?: boolean;
}

function sameFile(a: string, b: string): boolean {
  try {
    return realpathSync(a) === realpathSync(b);
  } catch {
    return false;
  }
}

/** Runs a conversion; returns the exit code (0, also when lines were reported; 2 on bad usage). */
export async function runConvert(input: string, o: ConvertCliOptions, err: (s: string) => void = (s) => process.stderr.write(s)): Promise<number> {
  const { from, opts } = importOptionsFrom(o);
  if (!from) throw new UsageError('--from chat|otlp is required');
  if (!o.out) throw new UsageError('--out <log> is required');
  const { chunks } = await openLog(input);
  await checkOutputPath(o.out, input, !!o.force);
  if (sameFile(o.out, input)) throw new UsageError(`refusing to write over the input ${input}`);
  const out = atomicWriter(o.out);
  let records = 0;
  let issues = 0;
  // Records are batched into ~1 MiB writes: one awaited write per record leaves the loop idle on I/O.
  let batch = '';
  try {
    for await (const e of convertLines(readLogLines(chunks), from, opts)) {
      if (e.type === 'record') {
        batch += JSON.stringify(e.record.record) + '\n';
        records++;
        if (batch.length >= 1 << 20) {
          await out.write(batch);
          batch = '';
        }
      } else {
        issues++;
        if (!o.quiet) err(formatIssue(input, e.issue) + '\n');
      }
    }
    if (batch) await out.write(batch);
    await out.commit();
  } catch (e) {
    await out.abort();
    throw e;
  }
  if (!o.quiet) err(`wrote ${records} record${records === 1 ? '' : 's'} to ${o.out} (${issues} issue${issues === 1 ? '' : 's'}); the log may hold personal data from the source: share with care\n`);
  return EXIT.ok;
}

export function registerConvert(program: Command, setExit: (code: number) => void = () => undefined): void {
  addImportFlags(
    program
      .command('convert')
      .description('convert a chat request log or OTLP/JSON traces into a Spillway log (the input is never modified)')
      .argument('<in>', 'chat request log (JSON Lines) or OTLP/JSON file')
      .requiredOption('--from <format>', 'chat or otlp')
      .requiredOption('--out <log>', 'the Spillway log to write (atomically)')
      .option('--force', 'replace --out if it exists')
      .option('--quiet', 'no notices on stderr'),
  ).action(async (input: string, o: ConvertCliOptions) => setExit(await runConvert(input, o)));
}
