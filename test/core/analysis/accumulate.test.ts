import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { auditText } from '../../../extension/core/audit/audit';
import { analyseTurn, summariseAnalyses } from '../../../extension/core/analysis';
import { AnalysisAccumulator } from '../../../extension/core/analysis/accumulate';
import type { TurnAnalysis } from '../../../extension/core/analysis/types';

describe('batched analysis summary', () => {
  it('equals the one-pass summary over many batches', async () => {
    const dir = join(__dirname, '../../../sample-workspace/logs');
    const items: TurnAnalysis[] = [];
    for (const f of ['fares-and-passes.jsonl', 'lost-property.jsonl', 'accessibility-and-service-changes.jsonl', 'long-trip-planning.jsonl']) {
      const text = readFileSync(join(dir, f), 'utf8');
      const lines = text.split('\n');
      const r = await auditText(text, {});
      for (const l of r.records) items.push(analyseTurn(JSON.parse(lines[l.line - 1]!), l));
    }
    // Repeat the turns so the accumulator crosses several batch boundaries (2,048 each).
    const many = Array.from({ length: 5000 }, (_, i) => items[i % items.length]!);
    const acc = new AnalysisAccumulator();
    many.forEach((a) => acc.add(a));
    const got = acc.result();
    const want = summariseAnalyses(many);
    for (const [k, v] of Object.entries(want)) {
      if (typeof v === 'number') expect((got as unknown as Record<string, number>)[k], k).toBeCloseTo(v, 9);
      else expect((got as unknown as Record<string, unknown>)[k], k).toEqual(v);
    }
  });
});
