import { describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { main } from '../../extension/cli/main';
import { atomicWriter, checkOutputPath, parseTokens } from '../../extension/cli/io';

const rec = (turn: number, passage: string) =>
  JSON.stringify({
    v: 1,
    conversation: 'c',
    turn,
    model: { name: 'gpt-4', window: 100, reserve: 10 },
    segments: [
      { id: 'sys', kind: 'instructions', role: 'system', text: 'Answer rider questions.' },
      { id: 'p1', kind: 'passage', role: 'system', rank: 1, text: passage },
      { id: 'q', kind: 'query', role: 'user', text: 'When does the night bus run?' },
    ],
  });

function workdir(): string {
  return mkdtempSync(join(tmpdir(), 'spillway-cli-'));
}

describe('spillway audit (exit codes, outputs)', () => {
  const dir = workdir();
  const log = join(dir, 'log.jsonl');
  const long = Array(80).fill('The night bus leaves the harbour at midnight.').join(' ');
  writeFileSync(log, [rec(1, 'Night buses run hourly.'), '{broken', rec(3, long)].join('\n'));
  const before = readFileSync(log);

  it('writes the JSON report atomically and never touches the log', async () => {
    const out = join(dir, 'audit.json');
    expect(await main(['audit', log, '--format', 'json', '--out', out, '--quiet'])).toBe(0);
    const report = JSON.parse(readFileSync(out, 'utf8'));
    expect(report.schema).toBe('spillway.audit/1');
    expect(report.records.map((r: { line: number }) => r.line)).toEqual([1, 3]);
    expect(report.errors[0]).toMatchObject({ line: 2, column: 2, code: 'bad-json' });
    expect(report.summary).toMatchObject({ turns: 2, malformed: 1, rank1Clipped: 1 });
    expect(readFileSync(log).equals(before)).toBe(true);
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  it('exits 1 when a requested threshold is violated', async () => {
    expect(await main(['audit', log, '--fail-on-clipped-top', '--out', join(dir, 't.txt'), '--quiet'])).toBe(1);
    expect(await main(['audit', log, '--fail-on-malformed', '--out', join(dir, 't2.txt'), '--quiet'])).toBe(1);
  });

  it('exits 2 on unreadable input or bad usage', async () => {
    expect(await main(['audit', join(dir, 'missing.jsonl')])).toBe(2);
    expect(await main(['audit', log, '--encoding', 'p99k_base'])).toBe(2);
    expect(await main(['audit', log, '--plan', 'no-such-plan'])).toBe(2);
    expect(await main(['audit', log, '--budget', 'lots'])).toBe(2);
    expect(await main(['audit', log, '--format', 'pdf'])).toBe(2);
    expect(await main(['nonsense'])).toBe(2);
  });

  it('writes an HTML report with a privacy notice and every text escaped', async () => {
    const out = join(dir, 'r.html');
    const evil = join(dir, 'evil.jsonl');
    writeFileSync(evil, rec(1, '<script>window.__spillwayPwned=1</script>').replace('"c"', '"<b>c</b>"'));
    expect(await main(['audit', evil, '--format', 'html', '--out', out, '--quiet'])).toBe(0);
    const html = readFileSync(out, 'utf8');
    expect(html).toContain('personal data');
    expect(html).not.toContain('<script>');
    expect(html).not.toContain('<b>c</b>');
    expect(html).toContain('&lt;b&gt;c&lt;/b&gt;');
  });
});

describe('atomic output', () => {
  it('an aborted write leaves neither the target nor a temp file', async () => {
    const dir = workdir();
    const w = atomicWriter(join(dir, 'out.jsonl'));
    await w.write('partial');
    await w.abort();
    expect(readdirSync(dir)).toEqual([]);
  });

  it('refuses the input as output, and an existing file without force', async () => {
    const dir = workdir();
    const f = join(dir, 'a.jsonl');
    writeFileSync(f, 'x');
    await expect(checkOutputPath(f, f, true)).rejects.toThrow(/over the input/);
    await expect(checkOutputPath(f, join(dir, 'b'), false)).rejects.toThrow(/--force/);
    await expect(checkOutputPath(f, join(dir, 'b'), true)).resolves.toBeUndefined();
  });

  it('parses token amounts (k = 1024, as context windows are usually named)', () => {
    expect(parseTokens('8192', 'x')).toBe(8192);
    expect(parseTokens('8k', 'x')).toBe(8 * 1024);
    expect(parseTokens('1m', 'x')).toBe(1024 * 1024);
    expect(() => parseTokens('8.5k', 'x')).toThrow();
  });
});

describe('spillway audit on imported shapes', () => {
  it('recognises a chat-message log and audits it converted in memory, like the converted file', async () => {
    const dir = workdir();
    const src = join(__dirname, '../fixtures/import/chat-requests.jsonl');
    const before = readFileSync(src);
    const converted = join(dir, 'converted.jsonl');
    expect(await main(['convert', src, '--from', 'chat', '--out', converted])).toBe(0);
    expect(await main(['audit', src, '--format', 'json', '--out', join(dir, 'a.json'), '--quiet', '--no-analysis'])).toBe(0);
    expect(await main(['audit', converted, '--format', 'json', '--out', join(dir, 'b.json'), '--quiet', '--no-analysis'])).toBe(0);
    const a = JSON.parse(readFileSync(join(dir, 'a.json'), 'utf8'));
    const b = JSON.parse(readFileSync(join(dir, 'b.json'), 'utf8'));
    const strip = (r: { used: number; budget: number; segments: unknown[] }) => ({ used: r.used, budget: r.budget, segments: r.segments });
    expect(a.records.map(strip)).toEqual(b.records.map(strip));
    expect(readFileSync(src).equals(before)).toBe(true);
  });
});
