import { describe, expect, it } from 'vitest';
import { readLog, readLogText, type ReadItem } from '../../../extension/core/log/reader';
import { auditText } from '../../../extension/core/audit/audit';

const good = (turn: number): string =>
  JSON.stringify({
    v: 1,
    conversation: 'c',
    turn,
    model: { name: 'gpt-4o-mini', window: 100, reserve: 10 },
    segments: [{ id: 'q', kind: 'query', role: 'user', text: `Is the ferry running on day ${turn}?` }],
  });

async function collect(chunks: Uint8Array[], maxLineBytes?: number): Promise<ReadItem[]> {
  const out: ReadItem[] = [];
  for await (const x of readLog(chunks, { maxLineBytes })) out.push(x);
  return out;
}
const issues = (items: ReadItem[]) => items.filter((i): i is { issue: import('../../../extension/core/log/types').LogIssue } => 'issue' in i).map((i) => i.issue);
const lines = (items: ReadItem[]) => items.filter((i) => !('issue' in i)).map((i) => (i as { line: number }).line);

describe('malformed lines: line, column, plain-words reason; the rest still read', () => {
  // Each bad line sits between good lines; columns are 1-based character positions, counted by hand.
  const bad: Array<[string, string, number, RegExp]> = [
    // `{"v":1,` then a stray brace at character 8
    ['{"v":1,}', 'bad-json', 8, /bad JSON: expected a property name/],
    // missing "segments": reported at the object (column 1)
    ['{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1}}', 'missing-field', 1, /missing field "segments"/],
    // turn is a string: the value starts at character 34 ('{"v":1,"conversation":"c","turn":' is 33 characters)
    ['{"v":1,"conversation":"c","turn":"one","model":{"name":"gpt-4","window":9,"reserve":1},"segments":[]}', 'wrong-type', 34, /"turn" must be integer/],
    // unknown encoding: the value "p99k" starts at character 94 (93 characters before it)
    ['{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1,"encoding":"p99k"},"segments":[]}', 'unknown-encoding', 94, /unknown encoding "p99k"/],
    // a segment kind outside the vocabulary: the value starts at character 113 (112 before it)
    ['{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1},"segments":[{"id":"a","kind":"memo","role":"user","text":"x"}]}', 'wrong-type', 113, /must be one of/],
    // a passage without a rank: reported at the segment object, character 96 (95 before it)
    ['{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1},"segments":[{"id":"a","kind":"passage","role":"system","text":"x"}]}', 'missing-field', 96, /missing field "segments\[0\]\.rank"/],
    // not an object
    ['[1,2,3]', 'wrong-type', 1, /must be a JSON object/],
  ];

  for (const [text, code, column, message] of bad) {
    it(`${code}: ${text.slice(0, 40)}…`, async () => {
      const log = [good(1), text, good(3)].join('\n');
      const r = await auditText(log, {});
      expect(r.errors).toHaveLength(1);
      expect(r.errors[0]).toMatchObject({ line: 2, code, column });
      expect(r.errors[0]!.message).toMatch(message);
      expect(r.records.map((l) => l.line)).toEqual([1, 3]);
      expect(r.summary.malformed).toBe(1);
    });
  }

  it('checks the hand-counted columns', () => {
    expect('{"v":1,"conversation":"c","turn":'.length).toBe(33);
    expect('{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1,"encoding":'.length).toBe(93);
    expect('{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1},"segments":[{"id":"a","kind":'.length).toBe(112);
    expect('{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4","window":9,"reserve":1},"segments":['.length).toBe(95);
  });
});

describe('streaming reader', () => {
  const enc = new TextEncoder();

  it('handles a BOM, CRLF and blank lines, and reports bad UTF-8', async () => {
    const bytes = [
      ...[0xef, 0xbb, 0xbf],
      ...enc.encode(good(1) + '\r\n\r\n   \n'),
      ...[0x7b, 0xff, 0x7d, 0x0a], // "{", an invalid byte, "}", newline
      ...enc.encode(good(5) + '\r\n'),
    ];
    const items = await collect([new Uint8Array(bytes)]);
    expect(lines(items)).toEqual([1, 5]);
    expect(issues(items)).toEqual([{ line: 4, column: 1, code: 'bad-encoding', message: 'line is not valid UTF-8' }]);
  });

  it('gives the same result whatever the chunk boundaries', async () => {
    const text = [good(1), '{oops', '', good(4), good(5)].join('\r\n');
    const bytes = enc.encode('\uFEFF' + text);
    const whole = await collect([bytes]);
    for (let size = 1; size <= 17; size++) {
      const chunks: Uint8Array[] = [];
      for (let i = 0; i < bytes.length; i += size) chunks.push(bytes.subarray(i, i + size));
      expect(await collect(chunks)).toEqual(whole);
    }
    expect(lines(whole)).toEqual([1, 4, 5]);
    // Offsets are bytes of the original file: line 4 starts after BOM + two lines + CRLFs + empty line.
    const l4 = whole.find((x) => !('issue' in x) && x.line === 4) as { offset: number };
    expect(l4.offset).toBe(3 + good(1).length + 2 + '{oops'.length + 2 + 2);
  });

  it('skips and reports an oversized line without buffering it, then goes on', async () => {
    const big = '{"v":1,"pad":"' + 'x'.repeat(5000) + '"}';
    const items = await collect([enc.encode([good(1), big, good(3)].join('\n'))], 1000);
    expect(lines(items)).toEqual([1, 3]);
    expect(issues(items)[0]).toMatchObject({ line: 2, code: 'line-too-long' });
  });

  it('reads in-memory text the same way', () => {
    const { records, issues: iss } = readLogText('\uFEFF' + [good(1), '{', good(3)].join('\r\n'));
    expect(records.map((r) => r.line)).toEqual([1, 3]);
    expect(iss[0]).toMatchObject({ line: 2, code: 'bad-json' });
  });

  it('keeps unknown fields', () => {
    const line = JSON.stringify({ ...JSON.parse(good(1)), retriever: { name: 'kb-v2' } });
    const { records } = readLogText(line);
    expect(records[0]!.record['retriever']).toEqual({ name: 'kb-v2' });
  });
});
