import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { auditText } from '../../extension/core/audit/audit';
import { readLogText } from '../../extension/core/log/reader';
import { groundingDiagnostics } from '../../extension/core/view/grounding';
import { ALL_CHECKS } from '../../extension/core/view/problems';

// The sample log's turns are written so the labels are obvious to a reader (sample-workspace/README):
// turn 1 invents a free postal return; turns 2 and 6 rest on the policy passage's clipped remainder.
const PATH = 'sample-workspace/logs/lost-property.jsonl';

describe('grounding diagnostics on lost-property.jsonl (real analysis)', async () => {
  const text = readFileSync(PATH, 'utf8');
  const lines = text.split('\n');
  const report = await auditText(text, { file: PATH }, { analysis: true });
  const records = readLogText(text).records;
  const all = report.records.map((ledger) => ({ ledger, diags: groundingDiagnostics({ line: ledger.line, ledger }, lines[ledger.line - 1]!, ALL_CHECKS) }));
  const codesOfTurn = (turn: number) => all.find((x) => x.ledger.turn === turn)!.diags.map((d) => d.code);

  it('turn 1 has an unsupported sentence; turns 2 and 6 have evidence lost to the budget', () => {
    expect(codesOfTurn(1)).toContain('spillway.unsupported-sentence');
    expect(codesOfTurn(2)).toContain('spillway.evidence-lost-to-budget');
    expect(codesOfTurn(6)).toContain('spillway.evidence-lost-to-budget');
    const unsupported = all.find((x) => x.ledger.turn === 1)!.diags.find((d) => d.code === 'spillway.unsupported-sentence')!;
    expect(JSON.parse(`"${lines[0]!.slice(unsupported.start, unsupported.end)}"`)).toBe('Once it is found, we will post the violin to your home free of charge.');
  });

  it('every sentence range, decoded with JSON.parse, is exactly the sentence the analysis scored', () => {
    let n = 0;
    for (const { ledger, diags } of all) {
      const byIndex = new Map(ledger.analysis!.sentences.map((s) => [s.index, s.text]));
      for (const d of diags) {
        const m = /^Reply sentence (\d+) /.exec(d.message);
        if (!m) continue;
        const raw = lines[d.line - 1]!.slice(d.start, d.end);
        expect(JSON.parse(`"${raw}"`)).toBe(byIndex.get(Number(m[1]) - 1));
        n++;
      }
    }
    expect(n).toBeGreaterThanOrEqual(4);
  });

  it('every passage range is that passage\'s text literal', () => {
    for (const { ledger, diags } of all) {
      const rec = records.find((r) => r.line === ledger.line)!.record;
      for (const d of diags) {
        const id = /^Passage "([^"]+)"/.exec(d.message)?.[1];
        if (!id) continue;
        expect(JSON.parse(lines[d.line - 1]!.slice(d.start, d.end))).toBe(rec.segments.find((s) => s.id === id)!.text);
      }
    }
  });
});
