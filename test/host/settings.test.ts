import { describe, expect, it } from 'vitest';
import { auditOptionsFor, parseTokenCount, readEditorSettings, validateTokenCount, withSettingDefaults, DEFAULT_MAX_LINE_LENGTH } from '../../extension/core/view/settings';
import { DEFAULT_CHECKS as ALL_CHECKS } from '../../extension/core/view/problems'; // the defaults: every check but stalePassage
import { hasLogExtension, sniffSpillway, firstLines } from '../../extension/core/view/recognise';
import { record } from './ledgerFixture';

const from = (o: Record<string, unknown>) => readEditorSettings((k) => o[k]);

describe('readEditorSettings', () => {
  it('falls back to defaults for missing or ill-typed values', () => {
    expect(from({})).toMatchObject({ framing: 'record', checks: ALL_CHECKS, logFilePatterns: [], maxLineLength: DEFAULT_MAX_LINE_LENGTH });
    expect(from({}).defaultEncoding).toBeUndefined();
    expect(from({}).defaultReserve).toBeUndefined();
    expect(from({ defaultReserve: -5, maxLineLength: 0, framing: 'fancy', logFilePatterns: 'x', defaultEncoding: 'fromRecord' })).toEqual(from({}));
  });
  it('reads valid values', () => {
    const s = from({
      defaultEncoding: 'cl100k_base',
      defaultReserve: 512,
      framing: { perMessage: 4, perName: -1, priming: 2 },
      'diagnostics.enabled': { usageDrift: false, rank1Clipped: 'no' },
      'diagnostics.usageDriftTolerance': 3,
      logFilePatterns: ['**/*.log', 7, ''],
      maxLineLength: 1000,
    });
    expect(s.defaultEncoding).toBe('cl100k_base');
    expect(s.defaultReserve).toBe(512);
    expect(s.framing).toBe('record'); // perName −1 is invalid → whole value ignored
    expect(s.checks).toEqual({ ...ALL_CHECKS, usageDrift: false, usageDriftTolerance: 3 });
    expect(s.logFilePatterns).toEqual(['**/*.log']);
    expect(s.maxLineLength).toBe(1000);
    expect(from({ framing: { perMessage: 4, perName: 1, priming: 2 } }).framing).toEqual({ perMessage: 4, perName: 1, priming: 2, countRole: true });
  });
});

describe('audit options and record defaults', () => {
  it('lets per-file overrides win over settings', () => {
    const s = from({ defaultReserve: 512 });
    expect(auditOptionsFor(s, undefined)).toEqual({ reserve: 512 });
    expect(auditOptionsFor(s, { reserve: 100, budget: 4000, encoding: 'o200k_base' })).toEqual({ reserve: 100, budget: 4000, encoding: 'o200k_base' });
    expect(auditOptionsFor(from({}), {})).toEqual({});
  });
  it('applies framing and default encoding without touching the source record', () => {
    const r = record({ model: { name: 'in-house-model', window: 100, reserve: 10 } });
    const frozen = JSON.stringify(r);
    const noMap = () => undefined;
    const out = withSettingDefaults(r, from({ framing: 'none', defaultEncoding: 'cl100k_base' }), noMap);
    expect(out.framing).toBe('none');
    expect(out.model.encoding).toBe('cl100k_base');
    expect(JSON.stringify(r)).toBe(frozen);
    // A model name the tokenizer knows keeps its own encoding.
    expect(withSettingDefaults(r, from({ defaultEncoding: 'cl100k_base' }), () => 'o200k_base').model.encoding).toBeUndefined();
    expect(withSettingDefaults(r, from({}), noMap)).toBe(r);
  });
});

describe('budget / reserve input validation', () => {
  it('accepts whole numbers with separators, and empty (= clear)', () => {
    expect(validateTokenCount('8,192', 'budget')).toBeUndefined();
    expect(validateTokenCount('  ', 'reserve')).toBeUndefined();
    expect(parseTokenCount('8_192')).toBe(8192);
    expect(parseTokenCount('')).toBeUndefined();
    expect(validateTokenCount('0', 'reserve')).toBeUndefined();
  });
  it('rejects anything else with a reason', () => {
    expect(validateTokenCount('8k', 'budget')).toMatch(/whole number/);
    expect(validateTokenCount('-1', 'budget')).toMatch(/whole number/);
    expect(validateTokenCount('0', 'budget')).toMatch(/at least 1/);
    expect(validateTokenCount('1.5', 'reserve')).toMatch(/whole number/);
    expect(validateTokenCount('200000000', 'budget')).toMatch(/100,000,000/);
  });
});

describe('log recognition', () => {
  it('checks .jsonl and .ndjson names', () => {
    expect(hasLogExtension('/a/b/LOG.JSONL')).toBe(true);
    expect(hasLogExtension('/a/b.ndjson')).toBe(true);
    expect(hasLogExtension('/a/b.json')).toBe(false);
  });
  it('tells records, look-alikes and other JSON Lines apart', () => {
    const rec = '{"v":1,"conversation":"c","turn":1,"model":{"name":"m","window":1,"reserve":0},"segments":[]}';
    expect(sniffSpillway(['', rec])).toBe('record');
    expect(sniffSpillway(['\uFEFF' + rec])).toBe('record');
    expect(sniffSpillway(['{"v":2,"model":{},"segments":"x"}'])).toBe('looks');
    expect(sniffSpillway(['{"v":1,"model":{"name":"m"},"segments":[{"id":'])).toBe('looks');
    expect(sniffSpillway(['{"prompt":"hi","completion":"there"}'])).toBe('no');
    expect(sniffSpillway([])).toBe('no');
  });
  it('takes the first non-blank lines', () => {
    expect(firstLines('a\r\n\n b\nc\nd', 2)).toEqual(['a', ' b']);
  });
});
