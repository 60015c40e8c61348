import { describe, expect, it } from 'vitest';
import Ajv from 'ajv';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { AUDIT_REPORT_SCHEMA } from '../../../extension/core/audit/schema';
import { main } from '../../../extension/cli/main';

describe('spillway.audit/1 JSON output matches its documented schema', () => {
  const validate = new Ajv({ strict: false, allErrors: true }).compile(AUDIT_REPORT_SCHEMA);
  const dir = join(__dirname, '../../../sample-workspace/logs');
  const out = mkdtempSync(join(tmpdir(), 'spillway-schema-'));
  for (const f of readdirSync(dir).filter((x) => x.endsWith('.jsonl'))) {
    it(f, async () => {
      const target = join(out, f + '.json');
      expect(await main(['audit', join(dir, f), '--format', 'json', '--out', target, '--quiet'])).toBe(0);
      const report = JSON.parse(readFileSync(target, 'utf8'));
      const ok = validate(report);
      expect(validate.errors ?? [], JSON.stringify(validate.errors?.slice(0, 3))).toEqual([]);
      expect(ok).toBe(true);
      expect(report.analysisSummary.turns).toBe(report.records.length);
    });
  }
});
