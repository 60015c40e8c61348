import { mkdtempSync, readFileSync, writeFileSync, existsSync, readdirSync, copyFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Command } from 'commander';
import { describe, expect, it } from 'vitest';
import { registerConvert, runConvert } from '../../../extension/cli/commands/convert';
import { registerInspect, runInspect } from '../../../extension/cli/commands/inspect';
import { UsageError } from '../../../extension/cli/io';
import { readLogText } from '../../../extension/core/log/reader';

const FIX = join(__dirname, '../../fixtures/import');
const quiet = (): void => undefined;

function workDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'spillway-import-'));
  copyFileSync(join(FIX, 'chat-requests.jsonl'), join(d, 'chat.jsonl'));
  copyFileSync(join(FIX, 'otel-traces.jsonl'), join(d, 'traces.jsonl'));
  return d;
}

describe('spillway convert', () => {
  it('writes a v1 log the reader accepts, leaves the input untouched and no temp file behind', async () => {
    const d = workDir();
    const before = readFileSync(join(d, 'chat.jsonl'));
    const msgs: string[] = [];
    const code = await runConvert(join(d, 'chat.jsonl'), { from: 'chat', out: join(d, 'out.jsonl') }, (s) => msgs.push(s));
    expect(code).toBe(0);
    const { records, issues } = readLogText(readFileSync(join(d, 'out.jsonl'), 'utf8'));
    expect(issues).toEqual([]);
    expect(records).toHaveLength(5);
    expect(readFileSync(join(d, 'chat.jsonl')).equals(before)).toBe(true);
    expect(readdirSync(d).sort()).toEqual(['chat.jsonl', 'out.jsonl', 'traces.jsonl']);
    // issues go to stderr as file:line:column: code: message, then a summary with the privacy note
    expect(msgs.some((m) => /chat\.jsonl:5:57: bad-json: /.test(m))).toBe(true);
    expect(msgs.at(-1)).toMatch(/wrote 5 records .*personal data/);
  });

  it('converts OTLP traces', async () => {
    const d = workDir();
    await runConvert(join(d, 'traces.jsonl'), { from: 'otlp', out: join(d, 'otel.jsonl'), quiet: true });
    expect(readLogText(readFileSync(join(d, 'otel.jsonl'), 'utf8')).records).toHaveLength(4);
  });

  it('refuses to overwrite the input or an existing file without --force', async () => {
    const d = workDir();
    await expect(runConvert(join(d, 'chat.jsonl'), { from: 'chat', out: join(d, 'chat.jsonl') }, quiet)).rejects.toThrow(/refusing to write over the input/);
    writeFileSync(join(d, 'taken.jsonl'), 'keep me\n');
    await expect(runConvert(join(d, 'chat.jsonl'), { from: 'chat', out: join(d, 'taken.jsonl') }, quiet)).rejects.toThrow(/exists; pass --force/);
    expect(readFileSync(join(d, 'taken.jsonl'), 'utf8')).toBe('keep me\n');
    await runConvert(join(d, 'chat.jsonl'), { from: 'chat', out: join(d, 'taken.jsonl'), force: true }, quiet);
    expect(readFileSync(join(d, 'taken.jsonl'), 'utf8')).toMatch(/^\{"v":1,/);
  });

  it('bad usage is a UsageError (exit 2 in main) with a one-line reason', async () => {
    const d = workDir();
    const cases: Array<[Parameters<typeof runConvert>[1], RegExp, string?]> = [
      [{ from: 'csv', out: join(d, 'x.jsonl') }, /--from must be chat or otlp/],
      [{ from: 'chat', out: join(d, 'x.jsonl'), splitter: 'magic' }, /--splitter must be one of/],
      [{ from: 'chat', out: join(d, 'x.jsonl'), splitter: 'regex', pattern: '(' }, /--pattern: the pattern is not a valid regular expression/],
      [{ from: 'chat', out: join(d, 'x.jsonl'), window: 'big' }, /--window must be a whole number/],
      [{ from: 'chat', out: join(d, 'x.jsonl'), roleKind: ['critic=query'] }, /--role-kind must look like role=kind/],
      [{ from: 'chat', out: join(d, 'x.jsonl') }, /cannot read .*missing\.jsonl/, 'missing.jsonl'],
    ];
    for (const [o, re, input] of cases) {
      const p = runConvert(join(d, input ?? 'chat.jsonl'), o, quiet);
      await expect(p).rejects.toThrow(re);
      await expect(p).rejects.toBeInstanceOf(UsageError);
    }
    expect(existsSync(join(d, 'x.jsonl'))).toBe(false);
  });

  it('registers on a commander program with the required options', async () => {
    const d = workDir();
    const program = new Command('spillway').exitOverride().configureOutput({ writeErr: quiet, writeOut: quiet });
    let code = -1;
    registerConvert(program, (c) => (code = c));
    registerInspect(program);
    await program.parseAsync(['convert', join(d, 'chat.jsonl'), '--from', 'chat', '--out', join(d, 'cli.jsonl'), '--quiet', '--window', '32k'], { from: 'user' });
    expect(code).toBe(0);
    const rec = JSON.parse(readFileSync(join(d, 'cli.jsonl'), 'utf8').split('\n')[0]!);
    expect(rec.model.window).toBe(32768);
    const p2 = new Command('spillway').exitOverride().configureOutput({ writeErr: quiet, writeOut: quiet });
    registerConvert(p2);
    await expect(p2.parseAsync(['convert', join(d, 'chat.jsonl'), '--from', 'chat'], { from: 'user' })).rejects.toThrow(/--out <log>/);
  });
});

describe('spillway inspect', () => {
  it('recognises the format and lists, per record, each message\'s mapping and the issues', async () => {
    const d = workDir();
    let out = '';
    await runInspect(join(d, 'chat.jsonl'), { limit: '2' }, (s) => (out += s));
    expect(out).toMatch(/recognised as a chat request log/);
    expect(out).toMatch(/message 1 \(user\) → prompt message 1: last user message → query; 3 passages found by tag <doc> \(auto\)/);
    expect(out).toMatch(/passage\s+kb-ferry-3 {2}\(160 chars, rank 1\)/);
    expect(out).toMatch(/… 3 more records not shown \(--limit 2\)\n5 records; 8 issues:/);
    expect(out).not.toMatch(/line 3: chat line 3/);
    let otel = '';
    await runInspect(join(d, 'traces.jsonl'), { splitter: 'none' }, (s) => (otel += s));
    expect(otel).toMatch(/recognised as OTLP\/JSON traces/);
    expect(otel).toMatch(/no retrieval span in the trace before this call/);
  });
});
