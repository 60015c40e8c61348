import { beforeAll, describe, expect, it } from 'vitest';
import { Accountant } from '../../../extension/core/tokens/accountant';
import { readLogForRepack, repackLines, RepackCancelled } from '../../../extension/core/repack/repack';
import { readLogText } from '../../../extension/core/log/reader';
import { buildLedger } from '../../../extension/core/audit/ledger';
import { compareLedgers, compareLogs } from '../../../extension/core/repack/compare';
import { repackRecord } from '../../../extension/core/repack/pack';
import { generateLog } from '../../../extension/core/sample/generator';
import type { TurnComparison } from '../../../extension/core/repack/compare';
import { record1 } from '../../fixtures/repack/records';

let acct: Accountant;
beforeAll(async () => {
  acct = await Accountant.create();
  await acct.encoder('cl100k_base');
  await acct.encoder('o200k_base');
}, 60_000);

const enc = new TextEncoder();
const lines = (text: string) => readLogForRepack([enc.encode(text)]);

async function repackText(text: string, opts: Parameters<typeof repackLines>[1], onComparison?: (c: TurnComparison) => void) {
  const out: string[] = [];
  const summary = await repackLines(lines(text), opts, { accountant: acct, write: (l) => void out.push(l), onComparison });
  return { out, summary };
}

describe('repackLines', () => {
  it('keeps unknown fields, copies malformed lines verbatim and reports them with line and column', async () => {
    const rec = { ...record1(), custom: { keep: [1, 2] }, usage: { prompt: 999 } };
    rec.segments = rec.segments.map((s) => (s.id === 'p1' ? { ...s, vendor: 'x' } : s));
    const bad = '{"v":1,"conversation":';
    const { out, summary } = await repackText(`${JSON.stringify(rec)}\n${bad}\n`, { budget: 150, plan: 'evidence-first' });
    expect(out).toHaveLength(2);
    const written = JSON.parse(out[0]!);
    expect(written.custom).toEqual({ keep: [1, 2] });
    expect(written.usage).toEqual({ prompt: 999 });
    expect(written.segments.find((s: { id: string }) => s.id === 'p1').vendor).toBe('x');
    expect(written.model).toEqual({ name: 'gpt-4', encoding: 'cl100k_base', window: 150, reserve: 0 });
    expect(written.plan).toBe('evidence-first');
    expect(out[1]).toBe(bad + '\n');
    expect(summary).toMatchObject({ records: 1, malformed: 1, copiedVerbatim: 1 });
    expect(summary.issues[0]).toMatchObject({ line: 2, code: 'bad-json' });
    expect(summary.issues[0]!.column).toBeGreaterThan(1);
  });

  it('the re-packed record audits (from its sent list) to the fates the plan chose', async () => {
    const { out } = await repackText(JSON.stringify(record1()) + '\n', { budget: 185, plan: 'split:20' });
    const { records } = readLogText(out.join(''));
    const l = buildLedger(records[0]!, {}, acct);
    expect(l.fatesFrom).toBe('sent');
    expect(l.used).toBe(185);
    expect(Object.fromEntries(l.segments.map((s) => [s.id, s.fate]))).toMatchObject({ p1: 'kept', p2: 'clipped', p3: 'dropped' });
    expect(l.segments.find((s) => s.id === 'p2')!.keptTokens).toBe(40);
  });

  it('stops on an aborted signal without writing more', async () => {
    const ac = new AbortController();
    ac.abort();
    const out: string[] = [];
    await expect(repackLines(lines(JSON.stringify(record1()) + '\n'), { budget: 100 }, { accountant: acct, signal: ac.signal, write: (l) => void out.push(l) })).rejects.toBeInstanceOf(RepackCancelled);
    expect(out).toHaveLength(0);
  });
});

describe('round trip on generated logs (records without `sent`)', () => {
  it("re-packing with each record's own budget and plan reproduces the fates and cut points of its ledger", async () => {
    const text = [...generateLog({ seed: 11, turns: 150, malformedRate: 0 })].join('\n') + '\n';
    const { records } = readLogText(text);
    expect(records.length).toBe(150);
    let clipped = 0;
    let dropped = 0;
    for (const r of records) {
      expect(r.record.sent).toBeUndefined();
      const original = buildLedger(r, {}, acct);
      const out = repackRecord(r.record, {}, acct);
      expect(out.record.model.window).toBe(r.record.model.window);
      expect(out.fates, `line ${r.line}`).toEqual(original.segments.map((s) => s.fate));
      original.segments.forEach((s, i) => {
        if (s.fate === 'clipped') {
          clipped++;
          expect(out.chars[i]).toBe(s.cut!.char);
        }
        if (s.fate === 'dropped') dropped++;
      });
      // And the written record audits to the same ledger figures.
      const again = buildLedger({ ...r, record: out.record }, {}, acct);
      expect(again.used).toBe(original.used);
    }
    // The generator makes small windows, so both kinds of cut occur (the check is not vacuous).
    expect(clipped).toBeGreaterThan(0);
    expect(dropped).toBeGreaterThan(0);
  });
});

describe('round trip through a re-packed log (records with `sent`)', () => {
  it('re-packing a re-packed record with its own budget and plan writes the same decisions, for every plan', () => {
    const text = [...generateLog({ seed: 12, turns: 40, malformedRate: 0 })].join('\n') + '\n';
    const { records } = readLogText(text);
    const plans = ['evidence-first', 'split:40', 'best-value', 'fusion:600', 'recent-first+top:3+dedupe:0.5+cap:120+cut:sentence+order:edges'];
    for (const plan of plans)
      for (const r of records) {
        const once = repackRecord(r.record, { budget: 1500, plan }, acct).record;
        const twice = repackRecord(once, {}, acct).record;
        expect(twice.sent, `${plan} line ${r.line}`).toEqual(once.sent);
        expect(twice.segments.map((s) => s.id)).toEqual(once.segments.map((s) => s.id));
        expect(twice.fusion).toEqual(once.fusion);
      }
  });
});

describe('compareLedgers', () => {
  it('R1 with evidence p2: recent-first at 185 clips p2 to 40 of 50 tokens (80%); evidence-first at 150 sends it whole but drops both history turns', () => {
    const record = { ...record1(), evidence: ['p2'], reply: 'blue blue blue' };
    const a = buildLedger({ line: 1, offset: 0, record }, { budget: 185, plan: 'recent-first' }, acct);
    const b = buildLedger({ line: 1, offset: 0, record }, { budget: 150, plan: 'evidence-first' }, acct);
    const c = compareLedgers(a, b, record);
    expect(c.evidence).toMatchObject({ basis: 'evidence', ids: ['p2'], tokensA: 50, keptA: 40, tokensB: 50, keptB: 50, retentionA: 0.8, retentionB: 1 });
    expect(c.historyDropped.sort()).toEqual([1, 2]);
    expect(c.lost).toEqual([]);
    expect(c.gained).toEqual([]);
    expect(c.passages.map((p) => [p.id, p.a, p.b])).toEqual([['p2', 'clipped', 'kept']]);
    // Reply "blue blue blue": all 3 reply tokens occur in the sent text on both sides → 1 and 1.
    expect(c.replySupport).toEqual({ a: 1, b: 1 });
    expect(c.better).toBe(true);
    expect(c.worse).toBe(false);
    // The reverse direction is worse.
    expect(compareLedgers(b, a, record).worse).toBe(true);
  });

  it('without marked evidence, the passage with the highest SQuAD F1 against the reply is the evidence', () => {
    // Reply "green green": F1 with p3 ("green" × 40): common 2, P = 2/2, R = 2/40 → F1 = 2·1·0.05/1.05 ≈ 0.095; p1, p2 share nothing → 0.
    const record = { ...record1(), reply: 'green green' };
    const a = buildLedger({ line: 1, offset: 0, record }, { budget: 1000 }, acct);
    const b = buildLedger({ line: 1, offset: 0, record }, { budget: 150 }, acct);
    const c = compareLedgers(a, b, record);
    expect(c.evidence).toMatchObject({ basis: 'best-passage', ids: ['p3'], retentionA: 1, retentionB: 0 });
    expect(c.lost).toEqual(['p2', 'p3']);
    expect(c.replySupport).toEqual({ a: 1, b: 0 });
    expect(c.worse).toBe(true);
  });
});

describe('compareLogs', () => {
  it('pairs records by (conversation, turn) in any order, counts malformed lines and unmatched records', async () => {
    const t3 = { ...record1(), evidence: ['p2'] };
    const t4 = { ...record1(), turn: 4 };
    const t5 = { ...record1(), turn: 5 };
    const a = readLogText([t3, t4, t5].map((r) => JSON.stringify(r)).join('\n'));
    const repacked = [t4, t3].map((r) => repackRecord(r, { budget: 150, plan: 'evidence-first' }, acct).record);
    const b = readLogText([JSON.stringify(repacked[0]), '{oops', JSON.stringify(repacked[1])].join('\n'));
    const r = await compareLogs([...a.records], [...b.records, ...b.issues.map((issue) => ({ issue }))], {}, { accountant: acct });
    expect(r.totals.turns).toBe(2);
    expect(r.unmatched).toEqual({ a: 1, b: 0 });
    expect(b.issues).toHaveLength(1);
    expect(r.malformed.b).toBe(1);
    // a packs under each record's own window of 1000 (everything fits, 235 tokens); b is evidence-first at 150 (125 tokens).
    const turn3 = r.turns.find((t) => t.turn === 3)!;
    expect([turn3.a.used, turn3.b.used]).toEqual([235, 125]);
    expect(turn3.lost).toEqual(['p3']);
    expect(turn3.historyDropped.sort()).toEqual([1, 2]);
    expect(turn3.evidence).toMatchObject({ retentionA: 1, retentionB: 1 });
    expect(r.totals).toMatchObject({ tokensA: 470, tokensB: 250, passagesLost: 2, historyTurnsDropped: 4 });
  });
});
