import { describe, expect, it } from 'vitest';
import { charForRawColumn, locateRecordLine, rawColumnForChar } from '../../extension/core/view/recordLine';

// A record line written by hand; column arithmetic below is counted by hand from this string.
//           0         1         2         3         4         5         6         7
//           0123456789012345678901234567890123456789012345678901234567890123456789012345678
const LINE = '{"v":1,"model":{"name":"m","window":9,"reserve":1},"segments":[{"id":"p1","text":"a\\"b\\u00e9c"}],"usage":{"prompt":42},"evidence":["p1"]}';

describe('locateRecordLine', () => {
  const map = locateRecordLine(LINE)!;

  it('finds the model object span', () => {
    // `{"name"` starts at column 15; the object closes with `}` at column 49, so end = 50.
    expect(LINE.slice(map.model!.start, map.model!.end)).toBe('{"name":"m","window":9,"reserve":1}');
    expect(map.model).toEqual({ start: 15, end: 50 });
  });

  it('finds each segment id and text literal, quotes included', () => {
    expect(map.segments).toHaveLength(1);
    const s = map.segments[0]!;
    expect(s.id).toBe('p1');
    expect(LINE.slice(s.idSpan!.start, s.idSpan!.end)).toBe('"p1"');
    // The text literal is `"a\"b\u00e9c"`: quotes 2 + a 1 + \" 2 + b 1 + \u00e9 6 + c 1 = 13 raw characters.
    expect(LINE.slice(s.text!.start, s.text!.end)).toBe('"a\\"b\\u00e9c"');
    expect(s.text!.end - s.text!.start).toBe(13);
  });

  it('finds usage.prompt and evidence ids', () => {
    expect(LINE.slice(map.usagePrompt!.start, map.usagePrompt!.end)).toBe('42');
    expect(map.evidence.map((e) => [e.id, LINE.slice(e.span.start, e.span.end)])).toEqual([['p1', '"p1"']]);
  });

  it('returns undefined for a line that is not a JSON object', () => {
    expect(locateRecordLine('[1,2]')).toBeUndefined();
    expect(locateRecordLine('not json')).toBeUndefined();
  });

  it('tolerates a broken line (partial map, no throw)', () => {
    expect(() => locateRecordLine('{"segments":[{"id":"x","text":"abc"')).not.toThrow();
  });
});

describe('raw column ↔ decoded character', () => {
  const lit = locateRecordLine(LINE)!.segments[0]!.text!;
  // Decoded text is a " b é c (5 UTF-16 units). Raw: `a` `\"` `b` `\u00e9` `c` = widths 1, 2, 1, 6, 1.
  const open = lit.start + 1;

  it('maps each decoded character to its raw column', () => {
    expect(rawColumnForChar(LINE, lit, 0)).toBe(open + 0); // a
    expect(rawColumnForChar(LINE, lit, 1)).toBe(open + 1); // \"
    expect(rawColumnForChar(LINE, lit, 2)).toBe(open + 3); // b
    expect(rawColumnForChar(LINE, lit, 3)).toBe(open + 4); // \u00e9
    expect(rawColumnForChar(LINE, lit, 4)).toBe(open + 10); // c
    expect(rawColumnForChar(LINE, lit, 5)).toBe(open + 11); // closing quote
    expect(rawColumnForChar(LINE, lit, 99)).toBe(lit.end - 1); // clamped
  });

  it('maps raw columns back (inside an escape → the escape’s character)', () => {
    expect(charForRawColumn(LINE, lit, open + 0)).toBe(0);
    expect(charForRawColumn(LINE, lit, open + 3)).toBe(2);
    expect(charForRawColumn(LINE, lit, open + 4)).toBe(3);
    expect(charForRawColumn(LINE, lit, open + 10)).toBe(4);
    expect(charForRawColumn(LINE, lit, lit.start)).toBe(0); // on the opening quote
  });

  it('counts a raw astral character as two units on both sides', () => {
    const line = '{"segments":[{"id":"x","text":"😀z"}]}';
    const t = locateRecordLine(line)!.segments[0]!.text!;
    // 😀 is a surrogate pair: 2 UTF-16 units raw and decoded, so z is decoded index 2 at raw offset +2.
    expect(rawColumnForChar(line, t, 2)).toBe(t.start + 1 + 2);
    expect(line[rawColumnForChar(line, t, 2)]).toBe('z');
  });
});
