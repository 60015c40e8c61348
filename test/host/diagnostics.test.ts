import { describe, expect, it } from 'vitest';
import { issueDiagnostic, logDiagnostics, onlyLooksLikeLog, recordDiagnostics } from '../../extension/core/view/diagnostics';
import { ALL_CHECKS } from '../../extension/core/view/problems';
import { audited, seg } from './ledgerFixture';

// One record line written by hand: the rank-1 passage text is `ABCDEFGHIJ` and the evidence is "p2".
const LINE =
  '{"v":1,"conversation":"c-1","turn":1,"model":{"name":"gpt-4o","window":8192,"reserve":1024},' +
  '"segments":[{"id":"p1","kind":"passage","role":"user","rank":1,"text":"ABCDEFGHIJ"},{"id":"p2","kind":"passage","role":"user","rank":2,"text":"xyz"}],' +
  '"usage":{"prompt":7040},"evidence":["p2"]}';
const col = (needle: string): number => LINE.indexOf(needle);

describe('recordDiagnostics', () => {
  const rec = audited(
    3,
    {
      state: 'over-budget',
      used: 7200,
      over: 32,
      rank1Fate: 'clipped',
      usage: { prompt: 7040, drift: -160 },
      segments: [
        seg({ id: 'p1', kind: 'passage', rank: 1, fate: 'clipped', tokens: 4, keptTokens: 2, cut: { token: 2, char: 6 } }),
        seg({ id: 'p2', kind: 'passage', rank: 2, fate: 'dropped', tokens: 1, keptTokens: 0 }),
      ],
    },
    { evidence: ['p2'] },
  );
  const diags = recordDiagnostics(rec, LINE, ALL_CHECKS);
  const byCode = new Map(diags.map((d) => [d.code, d]));

  it('raises one diagnostic per failed check, with its code', () => {
    expect(diags.map((d) => d.code).sort()).toEqual(['spillway.evidence-lost', 'spillway.over-budget', 'spillway.rank1-clipped', 'spillway.usage-drift']);
    expect(diags.every((d) => d.line === 3 && d.severity === 'warning')).toBe(true);
  });

  it('puts over-budget on the model object', () => {
    const d = byCode.get('spillway.over-budget')!;
    expect(LINE.slice(d.start, d.end)).toBe('{"name":"gpt-4o","window":8192,"reserve":1024}');
    expect(d.message).toBe('Prompt uses 7,200 tokens, 32 over the budget of 7,168 (window 8,192 − reserve 1,024).');
  });

  it('underlines exactly the spilled part of a clipped rank-1 passage', () => {
    const d = byCode.get('spillway.rank1-clipped')!;
    // Cut at character 6 of "ABCDEFGHIJ": kept "ABCDEF", spilled "GHIJ".
    expect(LINE.slice(d.start, d.end)).toBe('GHIJ');
    expect(d.start).toBe(col('ABCDEFGHIJ') + 6);
    expect(d.message).toContain('at token 2 (character 6): 2 of 4 tokens sent');
  });

  it('puts lost evidence on the passage text and usage drift on usage.prompt', () => {
    const ev = byCode.get('spillway.evidence-lost')!;
    expect(LINE.slice(ev.start, ev.end)).toBe('"xyz"');
    const drift = byCode.get('spillway.usage-drift')!;
    expect(LINE.slice(drift.start, drift.end)).toBe('7040');
    expect(drift.message).toBe('API-reported prompt tokens 7,040 differ from the counted 7,200 by -160.');
  });

  it('runs only the enabled checks', () => {
    const only = recordDiagnostics(rec, LINE, { ...ALL_CHECKS, overBudget: false, usageDrift: false, evidenceLost: false });
    expect(only.map((d) => d.code)).toEqual(['spillway.rank1-clipped']);
  });

  it('tolerates usage drift within the configured tolerance', () => {
    expect(recordDiagnostics(rec, LINE, { ...ALL_CHECKS, usageDriftTolerance: 160 }).some((d) => d.code === 'spillway.usage-drift')).toBe(false);
  });

  it('covers the whole text of a dropped rank-1 passage', () => {
    const dropped = audited(1, { rank1Fate: 'dropped', segments: [seg({ id: 'p1', kind: 'passage', rank: 1, fate: 'dropped', keptTokens: 0 })] });
    const d = recordDiagnostics(dropped, LINE, ALL_CHECKS)[0]!;
    expect(d.code).toBe('spillway.rank1-dropped');
    expect(LINE.slice(d.start, d.end)).toBe('"ABCDEFGHIJ"');
  });

  it('reports evidence that names no segment, on the evidence id', () => {
    const r = audited(1, { segments: [seg({ id: 'p1', kind: 'passage', rank: 1 })] }, { evidence: ['p2'] });
    const d = recordDiagnostics(r, LINE, ALL_CHECKS)[0]!;
    expect(d.message).toBe('Evidence "p2" names no segment of this record.');
  });
});

describe('malformed lines and files that only look like logs', () => {
  it('places a malformed-line error from its column to the end of the line', () => {
    const d = issueDiagnostic({ line: 4, column: 7, code: 'bad-json', message: 'Unexpected token' }, '{"v":1,,}');
    expect(d).toEqual({ line: 4, start: 6, end: 9, severity: 'error', code: 'spillway.malformed', message: 'Line 4, column 7: Unexpected token (bad-json)' });
  });

  it('decides "only looks like a log" from the share of bad lines', () => {
    expect(onlyLooksLikeLog(0, 1)).toBe(true); // nothing parsed at all
    expect(onlyLooksLikeLog(100, 9)).toBe(false);
    expect(onlyLooksLikeLog(9, 10)).toBe(true); // 10 of 19 lines bad (> 50%, ≥ 10)
    expect(onlyLooksLikeLog(10, 10)).toBe(false); // exactly half
    expect(onlyLooksLikeLog(2, 5)).toBe(false); // too few issues to judge: show them
  });

  it('replaces hundreds of errors with one message', () => {
    const issues = Array.from({ length: 300 }, (_, i) => ({ line: i + 2, column: 1, code: 'missing-field', message: 'missing "segments"' }));
    const log = { file: 'x.jsonl', records: [audited(1)], issues };
    const diags = logDiagnostics(log, () => '{"v":1}', ALL_CHECKS);
    expect(diags).toHaveLength(1);
    expect(diags[0]!.code).toBe('spillway.not-a-log');
    expect(diags[0]!.message).toContain('300 of its 301 lines are not records');
    expect(diags[0]!.message).toContain('First problem: line 2, column 1');
  });

  it('lists each malformed line of a real log, and honours the malformed check', () => {
    const log = { file: 'x.jsonl', records: [audited(1), audited(3)], issues: [{ line: 2, column: 1, code: 'bad-json', message: 'x' }] };
    expect(logDiagnostics(log, () => '{}', ALL_CHECKS).map((d) => [d.line, d.code])).toEqual([[2, 'spillway.malformed']]);
    expect(logDiagnostics(log, () => '{}', { ...ALL_CHECKS, malformed: false })).toEqual([]);
  });
});
