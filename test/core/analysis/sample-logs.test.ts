import Ajv from 'ajv';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { auditText } from '../../../extension/core/audit/audit';
import { readLogText } from '../../../extension/core/log/reader';
import { analyseTurn, summariseAnalyses } from '../../../extension/core/analysis/analyse';
import { loadShingleHasher } from '../../../extension/core/analysis/shingles';
import { ANALYSIS_SUMMARY_SCHEMA, TURN_ANALYSIS_SCHEMA } from '../../../extension/core/analysis/schema';
import type { TurnAnalysis } from '../../../extension/core/analysis/types';

// Integration with the real ledger (extension/core/audit) on the demo logs: the "done"
// needs supported, unsupported and lost sentences to show up on the sample turns.
const dir = 'sample-workspace/logs';

const ajv = new Ajv({ allErrors: true, strict: true });
const validTurn = ajv.compile(TURN_ANALYSIS_SCHEMA);
const validSummary = ajv.compile(ANALYSIS_SUMMARY_SCHEMA);

describe('analysis on the sample logs', () => {
  const all: TurnAnalysis[] = [];
  // Generous hook timeout: the ledger tokenises every log with the real encoder.
  beforeAll(async () => {
    await loadShingleHasher();
    for (const f of readdirSync(dir).filter((n) => n.endsWith('.jsonl'))) {
      const text = readFileSync(join(dir, f), 'utf8');
      const report = await auditText(text, { file: f });
      const byLine = new Map(readLogText(text).records.map((r) => [r.line, r.record]));
      for (const ledger of report.records) {
        const record = byLine.get(ledger.line)!;
        const a = analyseTurn(record, ledger);
        // Offsets point into the reply; the output is plain JSON.
        for (const s of a.sentences) expect(record.reply!.slice(s.start, s.end)).toBe(s.text);
        expect(JSON.parse(JSON.stringify(a))).toEqual(a);
        if (!validTurn(a)) throw new Error(`${f} line ${ledger.line}: ${ajv.errorsText(validTurn.errors)}`);
        all.push(a);
      }
    }
  }, 180_000);

  it('shows supported, unsupported and lost sentences somewhere in the demo', () => {
    const s = summariseAnalyses(all);
    expect(validSummary(s), ajv.errorsText(validSummary.errors)).toBe(true);
    expect(s.turns).toBeGreaterThan(0);
    expect(s.sentences.supported).toBeGreaterThan(0);
    expect(s.sentences.unsupported).toBeGreaterThan(0);
    expect(s.sentences.lost).toBeGreaterThan(0);
  });
});
