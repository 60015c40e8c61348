import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { decodedOffsetAt, jsonStringColumns } from '../../extension/core/view/jsonColumns';

// Every line below is written out by hand; the expected columns are counted by hand in the comments.
// The reply literal's opening quote is at column 9 in each: {"reply":" → { 0, " 1, reply 2–6, " 7, : 8, " 9.
describe('jsonStringColumns', () => {
  it('maps \\n, \\" and \\\\ escapes (2 raw units for 1 decoded)', () => {
    const line = String.raw`{"reply":"Hi\n\"x\"\\y"}`;
    // raw: H10 i11 \n12-13 \"14-15 x16 \"17-18 \\19-20 y21, closing quote 22
    expect(Array.from(jsonStringColumns(line, 9))).toEqual([10, 11, 12, 14, 16, 17, 19, 21, 22]);
    // independent check of the decoded length: JSON.parse
    expect(JSON.parse(line).reply).toHaveLength(8);
  });

  it('maps \\uXXXX escapes (6 raw units for 1 decoded), any hex case', () => {
    const line = String.raw`{"reply":"\u00e9t\u00E9"}`;
    // \u00e9 10–15, t 16, \u00E9 17–22, closing quote 23
    expect(Array.from(jsonStringColumns(line, 9))).toEqual([10, 16, 17, 23]);
    expect(JSON.parse(line).reply).toBe('été');
  });

  it('keeps an unescaped emoji as its two UTF-16 units', () => {
    const line = '{"reply":"a😀b"}';
    // a 10, 😀 11 and 12 (surrogate pair), b 13, closing quote 14
    expect(Array.from(jsonStringColumns(line, 9))).toEqual([10, 11, 12, 13, 14]);
    expect(JSON.parse(line).reply).toHaveLength(4);
  });

  it('maps an escaped surrogate pair to two decoded units of 6 raw each', () => {
    const line = String.raw`{"reply":"\ud83d\ude00!"}`;
    // \ud83d 10–15, \ude00 16–21, ! 22, closing quote 23
    expect(Array.from(jsonStringColumns(line, 9))).toEqual([10, 16, 22, 23]);
    expect(JSON.parse(line).reply).toBe('😀!');
  });

  it('handles a literal that does not start the line and an empty string', () => {
    const line = '{"a":1,"reply":""}';
    // opening quote at 15, closing quote at 16
    expect(Array.from(jsonStringColumns(line, 15))).toEqual([16]);
  });

  it('decodedOffsetAt inverts the table (a column inside an escape belongs to that unit)', () => {
    const line = String.raw`{"reply":"Hi\n\"x\"\\y"}`;
    const cols = jsonStringColumns(line, 9);
    expect(decodedOffsetAt(cols, 10)).toBe(0); // H
    expect(decodedOffsetAt(cols, 12)).toBe(2); // the backslash of \n
    expect(decodedOffsetAt(cols, 13)).toBe(2); // the n of \n
    expect(decodedOffsetAt(cols, 14)).toBe(3); // \"
    expect(decodedOffsetAt(cols, 21)).toBe(7); // y
    expect(decodedOffsetAt(cols, 22)).toBe(8); // closing quote = length
    expect(decodedOffsetAt(cols, 3)).toBe(0); // before the literal: clamped
  });

  it('agrees with JSON.parse on every unit of arbitrary strings (JSON.stringify as the encoder)', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 40 }), fc.string({ maxLength: 5 }), (s, pre) => {
        const prefix = `{"p":${JSON.stringify(pre)},"reply":`;
        const line = `${prefix}${JSON.stringify(s)}}`;
        const cols = jsonStringColumns(line, prefix.length);
        expect(cols.length).toBe(s.length + 1);
        expect(cols[s.length]).toBe(line.length - 2); // the closing quote, before the final }
        for (let i = 0; i < s.length; i++) expect(JSON.parse(`"${line.slice(cols[i], cols[i + 1])}"`)).toBe(s[i]);
      }),
      { numRuns: 300 },
    );
  });
});
