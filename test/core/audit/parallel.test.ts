import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { build } from 'esbuild';
import { auditItems, AuditCancelled } from '../../../extension/core/audit/audit';
import { auditLinesParallel } from '../../../extension/core/audit/parallel';
import { readLog, readLogLines } from '../../../extension/core/log/reader';
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

async function both(text: string, opts: AuditOptions, analysis: boolean, objects = false) {
  const single: string[] = [];
  const a = await auditItems(readLog(bytesOf(text)), opts, { analysis, onLedgerJson: (j) => single.push(j) });
  const parallel: string[] = [];
  const b = await auditLinesParallel(readLogLines(bytesOf(text)), opts, { analysis, workerScript, workers: 2, batchChars: 20_000, onLedgerJson: (j) => parallel.push(j) });
  // Object mode (text and HTML reports) as well.
  const c = objects ? await auditLinesParallel(readLogLines(bytesOf(text)), opts, { analysis, workerScript, workers: 2, batchChars: 50_000 }) : undefined;
  return { a, b, c, single, parallel };
}

const generated = (() => {
  const lines = [...generateLog({ seed: 8, turns: 240, malformedRate: 0.03 })];
  // Reader-level issues too: a blank line, a line that is not an object, a record with an unknown encoding.
  lines.splice(10, 0, '', '[1,2]', lines[3]!.replace('"model":{', '"model":{"encoding":"p50k_base",'));
  return lines.join('\n') + '\n';
})();

const cases: [string, string][] = [
  ...readdirSync(dir)
    .filter((f) => f.endsWith('.jsonl'))
    .map((f): [string, string] => [f, readFileSync(join(dir, f), 'utf8')]),
  ['generated (seed 8, 243 lines, malformed)', generated],
];

describe('parallel audit = single-thread audit', () => {
  for (const [name, text] of cases) {
    it(name, async () => {
      const objects = name.startsWith('generated');
      const { a, b, c, single, parallel } = await both(text, {}, true, objects);
      expect(single.length).toBeGreaterThan(0);
      expect(parallel).toEqual(single);
      expect(JSON.stringify(b)).toBe(JSON.stringify(a));
      if (!c) return;
      expect(c.records.map((l) => JSON.stringify(l))).toEqual(single);
      expect(JSON.stringify({ ...c, records: [] })).toBe(JSON.stringify(a));
    }, 120_000);
  }

  it('what-if options, no analysis, on the generated log', async () => {
    const { a, b, single, parallel } = await both(generated, { budget: 3000, plan: 'evidence-first' }, false);
    expect(a.errors.length).toBeGreaterThan(2);
    expect(parallel).toEqual(single);
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
  }, 120_000);

  it('stops with AuditCancelled when the signal fires, and reports progress in file order', async () => {
    const ac = new AbortController();
    const seen: number[] = [];
    const run = auditLinesParallel(readLogLines(bytesOf(generated)), {}, {
      workerScript,
      workers: 2,
      batchChars: 20_000,
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
