import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { build } from 'esbuild';
import { auditItems, AuditCancelled } from '../../../extension/core/audit/audit';
import { auditFileParallel, lineRanges } from '../../../extension/core/audit/parallel';
import { readLog } from '../../../extension/core/log/reader';
import { generateLog } from '../../../extension/core/sample/generator';
import type { AuditOptions } from '../../../extension/core/audit/types';

/**
 * Issue 8: the worker-thread audit must give the same report, byte for byte, as the single-thread audit
 * (whose figures the other audit tests check against the reference encoder). Small batches force many
 * batches and both workers; the generated log carries malformed lines so issues interleave with ledgers.
 */
const root = join(__dirname, '../../..');
const dir = join(root, 'sample-workspace/logs');
let tmp = '';
let workerScript = '';

beforeAll(async () => {
  tmp = mkdtempSync(join(tmpdir(), 'spillway-parallel-'));
  workerScript = join(tmp, 'auditWorker.js');
  await build({ entryPoints: [join(root, 'extension/core/audit/worker.ts')], outfile: workerScript, bundle: true, platform: 'node', format: 'cjs', target: 'node20', mainFields: ['module', 'main'], logLevel: 'warning' });
}, 120_000);
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const bytesOf = (text: string): Uint8Array[] => {
  const b = Buffer.from(text, 'utf8');
  const out: Uint8Array[] = [];
  for (let i = 0; i < b.length; i += 4096) out.push(b.subarray(i, i + 4096)); // lines straddle chunks
  return out;
};

let fileNo = 0;
/** The text as a log file (the parallel audit's workers read the file themselves). */
function asFile(text: string): string {
  const f = join(tmp, `log-${fileNo++}.jsonl`);
  writeFileSync(f, text);
  return f;
}

async function both(text: string, opts: AuditOptions, analysis: boolean, objects = false) {
  const single: string[] = [];
  const a = await auditItems(readLog(bytesOf(text)), opts, { analysis, onLedgerJson: (j) => single.push(j) });
  const file = asFile(text);
  // Bytes mode (the CLI's JSON output): ledgers joined by the separator, encoded by the workers.
  const chunks: Uint8Array[] = [];
  const b = await auditFileParallel(file, opts, { analysis, workerScript, workers: 2, batchBytes: 20_000, ledgerSeparator: ',\n', onLedgerBytes: (u) => chunks.push(Uint8Array.from(u)) });
  const parallel = Buffer.concat(chunks).toString('utf8');
  // Object mode (text and HTML reports) as well.
  const c = objects ? await auditFileParallel(file, opts, { analysis, workerScript, workers: 2, batchBytes: 50_000 }) : undefined;
  return { a, b, c, single, parallel };
}

const generated = (() => {
  const lines = [...generateLog({ seed: 8, turns: 240, malformedRate: 0.03 })];
  // Reader-level issues too: a blank line, a line that is not an object, a record with an unknown encoding.
  lines.splice(10, 0, '', '[1,2]', lines[3]!.replace('"model":{', '"model":{"encoding":"p50k_base",'));
  return lines.join('\n') + '\n';
})();

// Reader edge cases across range boundaries: a BOM, CRLF line ends, blank lines, a line far longer than
// a range, and no newline at the end.
const edges = (() => {
  const recs = [...generateLog({ seed: 3, turns: 12, malformedRate: 0 })];
  const long = recs[5]!.replace('"segments":[', `"note":"${'x'.repeat(60_000)}","segments":[`);
  return '\uFEFF' + recs.slice(0, 5).join('\r\n') + '\r\n\r\n' + long + '\n' + recs.slice(6).join('\n');
})();

const cases: [string, string][] = [
  ['edges (BOM, CRLF, blank, 60 kB line, no final newline)', edges],
  ...readdirSync(dir)
    .filter((f) => f.endsWith('.jsonl'))
    .map((f): [string, string] => [f, readFileSync(join(dir, f), 'utf8')]),
  ['generated (seed 8, 243 lines, malformed)', generated],
];

describe('lineRanges', () => {
  it('cuts at newlines into ranges of at least batchBytes, numbering first lines', async () => {
    // "a\nbb\n\nccc": newlines at bytes 1, 4, 5. With batchBytes 2: [0,2) line 1; [2,5) line 2 (3 bytes);
    // then the newline at 5 ends a 1-byte stretch (< 2), so the rest [5,9) is one range starting at line 3.
    const f = asFile('a\nbb\n\nccc');
    const got = [];
    for await (const r of lineRanges(f, 2)) got.push(r);
    expect(got).toEqual([
      { start: 0, end: 2, line: 1 },
      { start: 2, end: 5, line: 2 },
      { start: 5, end: 9, line: 3 },
    ]);
  });

  it('gives nothing for an empty file and one range for a file smaller than a batch', async () => {
    const none = [];
    for await (const r of lineRanges(asFile(''), 10)) none.push(r);
    expect(none).toEqual([]);
    const one = [];
    for await (const r of lineRanges(asFile('x\ny\n'), 10)) one.push(r);
    expect(one).toEqual([{ start: 0, end: 4, line: 1 }]);
  });
});

describe('parallel audit = single-thread audit', () => {
  for (const [name, text] of cases) {
    it(name, async () => {
      const objects = name.startsWith('generated');
      const { a, b, c, single, parallel } = await both(text, {}, true, objects);
      expect(single.length).toBeGreaterThan(0);
      expect(parallel).toBe(single.join(',\n'));
      expect(JSON.stringify(b)).toBe(JSON.stringify(a));
      if (!c) return;
      expect(c.records.map((l) => JSON.stringify(l))).toEqual(single);
      expect(JSON.stringify({ ...c, records: [] })).toBe(JSON.stringify(a));
    }, 120_000);
  }

  it('a line over --max-line-bytes is reported the same way (line, column, code) in the workers', async () => {
    const read = { maxLineBytes: 30_000 };
    const single: string[] = [];
    const a = await auditItems(readLog(bytesOf(edges), read), {}, { read, onLedgerJson: (j) => single.push(j) });
    const chunks: Uint8Array[] = [];
    const b = await auditFileParallel(asFile(edges), {}, { read, workerScript, workers: 2, batchBytes: 20_000, ledgerSeparator: ',\n', onLedgerBytes: (u) => chunks.push(Uint8Array.from(u)) });
    expect(a.errors.map((e) => e.code)).toContain('line-too-long');
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
    expect(Buffer.concat(chunks).toString('utf8')).toBe(single.join(',\n'));
  }, 120_000);

  it('workers share token counts: what one counted, the other does not count again', async () => {
    const stats: { hits: number; sharedHits?: number }[][] = [];
    await auditFileParallel(asFile(generated), {}, { workerScript, workers: 2, batchBytes: 20_000, onStats: (s) => stats.push(s), onLedgerJson: () => undefined });
    const shared = stats[0]!.reduce((n, s) => n + (s.sharedHits ?? 0), 0);
    expect(shared).toBeGreaterThan(0);
  }, 120_000);

  it('what-if options, no analysis, on the generated log', async () => {
    const { a, b, single, parallel } = await both(generated, { budget: 3000, plan: 'evidence-first' }, false);
    expect(a.errors.length).toBeGreaterThan(2);
    expect(parallel).toBe(single.join(',\n'));
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
  }, 120_000);

  it('stops with AuditCancelled when the signal fires, and reports progress in file order', async () => {
    const ac = new AbortController();
    const seen: number[] = [];
    const run = auditFileParallel(asFile(generated), {}, {
      workerScript,
      workers: 2,
      batchBytes: 20_000,
      progressEvery: 10,
      onProgress: (done) => {
        seen.push(done);
        if (done >= 20) ac.abort();
      },
      signal: ac.signal,
      onLedgerJson: () => undefined,
    });
    await expect(run).rejects.toBeInstanceOf(AuditCancelled);
    expect(seen.slice(0, 2)).toEqual([10, 20]);
  }, 120_000);
});
