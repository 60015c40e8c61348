import { describe, expect, it } from 'vitest';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import type { Ledger } from '../../extension/core/audit/types';
import type { LogRecord } from '../../extension/core/log/types';
import { Cancelled, IncrementalAuditor, type LineDocument } from '../../extension/core/view/incremental';
import { auditRecord } from '../../extension/core/audit/ledger';
import { auditText } from '../../extension/core/audit/audit';
import { parseRecordLine } from '../../extension/core/log/reader';
import { Accountant } from '../../extension/core/tokens/accountant';
import { codeLensTitle } from '../../extension/core/view/codeLens';
import { ledger } from './ledgerFixture';

const doc = (lines: string[]): LineDocument => ({ lineCount: lines.length, lineAt: (l) => lines[l - 1]! });

/** A stand-in parser/auditor: a line `{"n":N}` is a record whose ledger uses N tokens; anything else is malformed. */
function fakeDeps() {
  const calls = { parse: 0, audit: 0 };
  const auditor = new IncrementalAuditor({
    parse: (text, line) => {
      calls.parse++;
      try {
        const v = JSON.parse(text) as { n: number };
        return { record: { v: 1, conversation: 'c', turn: v.n, model: { name: 'm', window: 10, reserve: 1 }, segments: [] } as LogRecord };
      } catch {
        return { issue: { line, column: 1, code: 'bad-json', message: 'not JSON' } };
      }
    },
    audit: async (located) => {
      calls.audit++;
      if (located.record.turn === 13) throw new Error('unknown encoding "x"');
      return ledger({ line: located.line, used: located.record.turn }) as Ledger;
    },
    maxLineLength: 40,
  });
  return { auditor, calls };
}

describe('IncrementalAuditor', () => {
  it('audits every non-blank line once, reporting bad lines with their line number', async () => {
    const { auditor, calls } = fakeDeps();
    const r = await auditor.run(doc(['{"n":1}', '', 'oops', '{"n":2}', '{"n":13}', `{"n":${'9'.repeat(40)}}`]), 'f');
    expect(r.log.records.map((x) => [x.line, x.ledger.used])).toEqual([
      [1, 1],
      [4, 2],
    ]);
    expect(r.log.issues.map((i) => [i.line, i.code])).toEqual([
      [3, 'bad-json'],
      [5, 'audit-failed'],
      [6, 'line-too-long'],
    ]);
    expect(r.recomputed).toBe(5);
    expect(calls.audit).toBe(3);
  });

  it('recomputes only changed lines after an edit; moved lines keep their ledger with the new line number', async () => {
    const { auditor, calls } = fakeDeps();
    await auditor.run(doc(['{"n":1}', '{"n":2}', '{"n":3}']), 'f');
    calls.parse = calls.audit = 0;
    // Insert a new line at the top and change the last one.
    const r = await auditor.run(doc(['{"n":9}', '{"n":1}', '{"n":2}', '{"n":4}']), 'f');
    expect(r.recomputed).toBe(2);
    expect(calls).toEqual({ parse: 2, audit: 2 });
    expect(r.log.records.map((x) => [x.line, x.ledger.line, x.ledger.used])).toEqual([
      [1, 1, 9],
      [2, 2, 1],
      [3, 3, 2],
      [4, 4, 4],
    ]);
  });

  it('stops when cancelled, keeping the previous cache', async () => {
    const ac = new AbortController();
    ac.abort();
    // sliceMs −1: yield (and check the signal) before the first line.
    const slow = new IncrementalAuditor({ parse: () => ({ issue: { line: 1, column: 1, code: 'x', message: 'x' } }), audit: async () => ledger(), maxLineLength: 10, sliceMs: -1 });
    await expect(slow.run(doc(['{"n":1}', '{"n":2}']), 'f', { signal: ac.signal })).rejects.toBeInstanceOf(Cancelled);
  });

  it('yields to the event loop and reports progress on long documents', async () => {
    let t = 0;
    const progress: number[] = [];
    const a = new IncrementalAuditor({
      parse: (text) => ({ record: { v: 1, conversation: 'c', turn: Number(text), model: { name: 'm', window: 1, reserve: 0 }, segments: [] } as LogRecord }),
      audit: async (l) => ledger({ line: l.line }),
      maxLineLength: 100,
      sliceMs: 5,
      now: () => (t += 1), // each clock read advances 1 ms: a yield every few lines
    });
    const lines = Array.from({ length: 50 }, (_, i) => String(i + 1));
    const r = await a.run(doc(lines), 'f', { onProgress: (done) => progress.push(done) });
    expect(r.log.records).toHaveLength(50);
    expect(progress.length).toBeGreaterThan(3);
    expect(progress.at(-1)).toBe(50);
  });
});

describe('IncrementalAuditor on the real core and the sample logs', () => {
  const dir = join(__dirname, '../../sample-workspace/logs');
  const files = readdirSync(dir).filter((f) => f.endsWith('.jsonl'));

  it('gives the same ledgers as the batch audit (auditText) for every sample log, and a CodeLens for every record', async () => {
    expect(files.length).toBeGreaterThan(0);
    const acct = await Accountant.create();
    for (const f of files) {
      const text = readFileSync(join(dir, f), 'utf8');
      const lines = text.split('\n').map((l) => l.replace(/\r$/, ''));
      if (lines.at(-1) === '') lines.pop();
      const inc = new IncrementalAuditor({ parse: parseRecordLine, audit: (l) => auditRecord(l, {}, acct), maxLineLength: 1 << 24 });
      const { log } = await inc.run(doc(lines), f);
      const batch = await auditText(text, { file: f }, { accountant: acct });
      expect(log.records.map((r) => r.ledger)).toEqual(batch.records);
      expect(log.issues).toEqual(batch.errors);
      for (const r of log.records) expect(codeLensTitle(r.ledger)).toMatch(/^\d[\d,]* \/ \d[\d,]* · /);
    }
  });
});
