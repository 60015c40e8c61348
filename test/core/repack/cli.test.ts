import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { main } from '../../../extension/cli/main';
import { record1 } from '../../fixtures/repack/records';

let dir: string;
let log: string;
const errs: string[] = [];
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spillway-repack-'));
  log = join(dir, 'a.jsonl');
  writeFileSync(log, [JSON.stringify({ ...record1(), evidence: ['p2'] }), JSON.stringify({ ...record1(), turn: 4 })].join('\n') + '\n');
  vi.spyOn(process.stderr, 'write').mockImplementation((s) => (errs.push(String(s)), true));
  vi.spyOn(process.stdout, 'write').mockImplementation(() => true);
});
afterAll(() => {
  vi.restoreAllMocks();
  rmSync(dir, { recursive: true, force: true });
});

describe('spillway repack / compare / sweep', () => {
  it('writes the re-packed log atomically and leaves no temp file', async () => {
    const out = join(dir, 'b.jsonl');
    expect(await main(['repack', log, '--budget', '150', '--plan', 'evidence-first', '--out', out, '--quiet'])).toBe(0);
    const lines = readFileSync(out, 'utf8').trim().split('\n');
    expect(lines).toHaveLength(2);
    expect(JSON.parse(lines[0]!).plan).toBe('evidence-first');
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
    expect(await main(['compare', log, out, '--format', 'json', '--out', join(dir, 'cmp.json'), '--quiet'])).toBe(0);
    const cmp = JSON.parse(readFileSync(join(dir, 'cmp.json'), 'utf8'));
    expect(cmp.totals.turns).toBe(2);
  });

  it('refuses the input as output, an existing output without --force, unknown plans and encodings (exit 2)', async () => {
    errs.length = 0;
    expect(await main(['repack', log, '--budget', '100', '--out', log])).toBe(2);
    expect(errs.join('')).toMatch(/refusing to write over the input/);
    const existing = join(dir, 'exists.jsonl');
    writeFileSync(existing, 'keep me');
    expect(await main(['repack', log, '--budget', '100', '--out', existing])).toBe(2);
    expect(readFileSync(existing, 'utf8')).toBe('keep me');
    expect(await main(['repack', log, '--budget', '100', '--out', existing, '--force', '--quiet'])).toBe(0);
    errs.length = 0;
    expect(await main(['repack', log, '--budget', '100', '--plan', 'widest-first', '--out', join(dir, 'x.jsonl')])).toBe(2);
    expect(errs.join('')).toMatch(/valid: recent-first, evidence-first, split:P/);
    errs.length = 0;
    expect(await main(['repack', log, '--budget', '100', '--encoding', 'p50k', '--out', join(dir, 'x.jsonl')])).toBe(2);
    expect(errs.join('')).toMatch(/valid: cl100k_base, o200k_base/);
    expect(await main(['sweep', log, '--budgets', '4k', '--plans', 'recent-first,nope'])).toBe(2);
  });
});
