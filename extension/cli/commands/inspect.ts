/**
 * `spillway inspect <file> [--from chat|otlp] [--splitter …]`: shows, per record, how each message of
 * a chat log or trace was mapped to segments and why, without writing anything.
 */
import type { Command } from 'commander';
import { readLogLines } from '../../core/log/reader';
import { convertLines, detectFormat } from '../../core/import/index';
import { formatInspection, formatIssue } from '../../core/import/inspect';
import { EXIT, openLog, UsageError } from '../io';
import { addImportFlags, importOptionsFrom, type ImportCliFlags } from './convert';

async function firstLines(path: string, n: number): Promise<string[]> {
  const { chunks } = await openLog(path);
  const out: string[] = [];
  for await (const l of readLogLines(chunks)) {
    if ('issue' in l) continue;
    out.push(l.text.slice(0, 4096));
    if (out.length >= n) break;
  }
  return out;
}

export interface InspectCliOptions extends ImportCliFlags {
  limit?: string;
}

export async function runInspect(input: string, f: InspectCliOptions, write: (s: string) => void = (s) => process.stdout.write(s)): Promise<number> {
  const { from: given, opts } = importOptionsFrom(f);
  if (f.limit !== undefined && !/^\d+$/.test(f.limit)) throw new UsageError(`--limit must be a whole number, got "${f.limit}"`);
  const limit = f.limit === undefined ? Infinity : Number(f.limit);
  let from = given;
  if (!from) {
    const d = detectFormat(await firstLines(input, 5));
    if (d === 'spillway') throw new UsageError(`${input} is already a Spillway log; use spillway audit`);
    if (d !== 'chat' && d !== 'otlp') throw new UsageError(`cannot tell the format of ${input}; pass --from chat|otlp`);
    from = d;
    write(`${input}: recognised as ${from === 'chat' ? 'a chat request log' : 'OTLP/JSON traces'}\n\n`);
  }
  const { chunks } = await openLog(input);
  let records = 0;
  const issues: string[] = [];
  for await (const e of convertLines(readLogLines(chunks), from, opts)) {
    if (e.type === 'record') {
      if (records++ < limit) write(formatInspection(e.record, e.explain).join('\n') + '\n\n');
    } else issues.push(formatIssue(input, e.issue));
  }
  if (records > limit) write(`… ${records - limit} more record${records - limit === 1 ? '' : 's'} not shown (--limit ${limit})\n`);
  write(`${records} record${records === 1 ? '' : 's'}; ${issues.length} issue${issues.length === 1 ? '' : 's'}${issues.length ? ':' : ''}\n`);
  for (const i of issues) write(`  ${i}\n`);
  return EXIT.ok;
}

export function registerInspect(program: Command, setExit: (code: number) => void = () => undefined): void {
  addImportFlags(
    program
      .command('inspect')
      .description('show how a chat log or trace file maps to Spillway records, message by message (writes nothing)')
      .argument('<file>', 'chat request log (JSON Lines) or OTLP/JSON file')
      .option('--from <format>', 'chat or otlp (default: recognised from the first lines)')
      .option('--limit <n>', 'show the mapping of the first n records only (issues and the count cover the whole file)'),
  ).action(async (input: string, o: InspectCliOptions) => setExit(await runInspect(input, o)));
}
