import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { findBlocks, findNumberedBlocks, findRegexBlocks, findSeparatorBlocks, findTagBlocks, layoutMessage } from '../../../extension/core/import/split';
import { resolveImportOptions } from '../../../extension/core/import/options';

// Spillway joins the segments of one message with a blank line (JOINER in log/types.ts); written out
// here rather than imported so the tests state the contract themselves.
const BLANK = '\n\n';
const join = (pieces: Array<{ text: string }>): string => pieces.map((p) => p.text).join(BLANK);

describe('finding passage blocks', () => {
  it('tag pairs: id, score, source and date attributes, whole block and inner text', () => {
    const t = 'Q?\n\n<doc id="kb-1" score="0.5" source="help/fares">Fare A.</doc>\n\n<DOC id=\'kb-2\' date="2026-01-02">Fare B.</DOC>';
    const b = findTagBlocks(t, 'doc', 'id');
    expect(b).toHaveLength(2);
    expect(t.slice(b[0]!.start, b[0]!.end)).toBe('<doc id="kb-1" score="0.5" source="help/fares">Fare A.</doc>');
    expect(t.slice(b[0]!.innerStart, b[0]!.innerEnd)).toBe('Fare A.');
    expect(b[0]).toMatchObject({ id: 'kb-1', score: 0.5, source: 'help/fares' });
    expect(b[1]).toMatchObject({ id: 'kb-2', date: '2026-01-02' });
    expect(t.slice(b[1]!.innerStart, b[1]!.innerEnd)).toBe('Fare B.');
  });

  it('a configured tag name and id attribute', () => {
    const t = '<passage key="p9">Text</passage>';
    expect(findTagBlocks(t, 'passage', 'key')[0]).toMatchObject({ id: 'p9', start: 0, end: t.length });
    expect(findTagBlocks(t, 'doc', 'id')).toHaveLength(0);
  });

  it('numbered blocks run to the next [n] line or the first blank line', () => {
    const t = 'Sources:\n[1] First.\n[2] Second\ncontinued.\n\nQuestion?';
    const b = findNumberedBlocks(t);
    expect(b.map((x) => x.id)).toEqual(['1', '2']);
    expect(t.slice(b[0]!.start, b[0]!.end)).toBe('[1] First.');
    expect(t.slice(b[1]!.start, b[1]!.end)).toBe('[2] Second\ncontinued.');
    expect(t.slice(b[1]!.innerStart, b[1]!.innerEnd)).toBe('Second\ncontinued.');
  });

  it('separator blocks lie between separator lines, each starting at its opening line', () => {
    const t = 'Read these:\n\n---\nAlpha text\n\n---\nBeta text\n\n---\n\nWhich one?';
    const b = findSeparatorBlocks(t, '---');
    expect(b.map((x) => t.slice(x.innerStart, x.innerEnd))).toEqual(['Alpha text', 'Beta text']);
    expect(b.map((x) => x.id)).toEqual(['p1', 'p2']);
    expect(t.slice(b[0]!.start, b[0]!.end)).toBe('---\nAlpha text');
  });

  it('a user pattern with named groups id, text and score', () => {
    const t = 'DOC#a7 (0.9): Ferry info\nDOC#b2 (0.4): Bus info\n';
    const b = findRegexBlocks(t, '^DOC#(?<id>\\w+) \\((?<score>[\\d.]+)\\): (?<text>.*)$', 'm');
    expect(b.map((x) => [x.id, x.score, t.slice(x.innerStart, x.innerEnd)])).toEqual([
      ['a7', 0.9, 'Ferry info'],
      ['b2', 0.4, 'Bus info'],
    ]);
  });

  it('a bad pattern is reported, not thrown', () => {
    const o = resolveImportOptions({ splitter: { kind: 'regex', pattern: '(?<id>[' } });
    expect(findBlocks('x', o.splitter).error).toMatch(/not a valid regular expression/);
    const o2 = resolveImportOptions({ splitter: { kind: 'regex', pattern: '(?<id>\\w+)' } });
    expect(findBlocks('x', o2.splitter).error).toMatch(/no named group "text"/);
  });
});

describe('exact layout: segments joined with a blank line give back the message', () => {
  it('cuts at blank lines around passages and keeps the wrapper in the passage segment', () => {
    const t = 'When is the first ferry?\n\n<doc id="a">Ferry 08:30.</doc>\n\n<doc id="b">Pass info.</doc>';
    const l = layoutMessage(t, findTagBlocks(t, 'doc', 'id'), 'exact');
    expect(l.pieces.map((p) => p.text)).toEqual(['When is the first ferry?', '<doc id="a">Ferry 08:30.</doc>', '<doc id="b">Pass info.</doc>']);
    expect(l.pieces.map((p) => p.blocks.map((b) => b.id))).toEqual([[], ['a'], ['b']]);
    expect(join(l.pieces)).toBe(t);
    expect(l.notes).toEqual([]);
  });

  it('text between passages becomes its own segment; extra newlines stay inside a segment', () => {
    const t = '<doc id="a">A</doc>\n\n\nAlso:\n\n<doc id="b">B</doc>\n\nThanks';
    const l = layoutMessage(t, findTagBlocks(t, 'doc', 'id'), 'exact');
    expect(l.pieces.map((p) => p.text)).toEqual(['<doc id="a">A</doc>', '\nAlso:', '<doc id="b">B</doc>', 'Thanks']);
    expect(join(l.pieces)).toBe(t);
  });

  it('passages on single newlines share a segment, reported as import-merged', () => {
    const t = 'Sources:\n[1] One.\n[2] Two.';
    const l = layoutMessage(t, findNumberedBlocks(t), 'exact');
    expect(l.pieces).toHaveLength(1);
    expect(l.pieces[0]!.text).toBe(t);
    expect(l.pieces[0]!.blocks.map((b) => b.id)).toEqual(['1', '2']);
    expect(l.notes.map((n) => n.code)).toEqual(['import-merged', 'import-merged']);
  });

  it('property: any text with any passage blocks re-joins byte for byte', () => {
    const chunk = fc.stringMatching(/^[a-z \n]{0,12}$/);
    fc.assert(
      fc.property(fc.array(fc.tuple(chunk, fc.stringMatching(/^[a-z \n]{1,10}$/)), { minLength: 1, maxLength: 5 }), chunk, (parts, tail) => {
        let t = '';
        parts.forEach(([gap, body], i) => (t += `${gap}<doc id="d${i}">${body}</doc>`));
        t += tail;
        const blocks = findTagBlocks(t, 'doc', 'id');
        expect(blocks).toHaveLength(parts.length);
        const l = layoutMessage(t, blocks, 'exact');
        expect(join(l.pieces)).toBe(t);
        // every block is in exactly one piece, in order
        expect(l.pieces.flatMap((p) => p.blocks.map((b) => b.id))).toEqual(parts.map((_, i) => `d${i}`));
        // no piece is empty
        for (const p of l.pieces) expect(p.text.length).toBeGreaterThan(0);
      }),
      { numRuns: 400 },
    );
  });
});

describe('split layout', () => {
  it('one segment per passage with the wrapper removed, reported as import-reflowed', () => {
    const t = 'Sources:\n[1] One.\n[2] Two.\nQuestion?';
    const l = layoutMessage(t, findNumberedBlocks(t), 'split');
    // the numbered block [2] runs to the end of the line run (no blank line), so the question is in it
    expect(l.pieces.map((p) => p.text)).toEqual(['Sources:', 'One.', 'Two.\nQuestion?']);
    expect(l.notes[0]!.code).toBe('import-reflowed');
    expect(join(l.pieces)).not.toBe(t);
  });
});
