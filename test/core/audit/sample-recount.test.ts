import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { auditText } from '../../../extension/core/audit/audit';
import { refCount, refSentTokens } from '../../support/reference';

/**
 * Issue #2 "done when": the audit of every sample log matches an independent recount — the
 * reference BPE (tiktoken WASM) on the prompt rendered from the ledger's fates and cut points.
 */
const dir = join(__dirname, '../../../sample-workspace/logs');
const logs = readdirSync(dir).filter((f) => f.endsWith('.jsonl') || f.endsWith('.ndjson'));

describe('sample logs: audit = independent recount', () => {
  it('has sample logs', () => expect(logs.length).toBeGreaterThanOrEqual(4));

  for (const file of logs) {
    it(file, async () => {
      const text = readFileSync(join(dir, file), 'utf8');
      const report = await auditText(text, { file });
      const lines = text.split('\n');
      expect(report.records.length).toBeGreaterThan(0);
      for (const l of report.records) {
        const rec = JSON.parse(lines[l.line - 1]!);
        const enc = l.encoding as 'cl100k_base' | 'o200k_base';
        rec.segments.forEach((s: { text: string }, i: number) => expect(l.segments[i]!.tokens, `${file}:${l.line} ${l.segments[i]!.id}`).toBe(refCount(enc, s.text)));
        expect(l.used, `${file}:${l.line}`).toBe(refSentTokens(enc, rec.framing, rec.segments, l.segments));
        expect(l.used).toBe(l.framing + l.joins + l.segments.reduce((a, s) => a + s.keptTokens, 0));
      }
    });
  }
});
