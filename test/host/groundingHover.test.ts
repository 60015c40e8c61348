import { describe, expect, it, vi } from 'vitest';

// A minimal stand-in for the `vscode` module: just the classes the hover provider builds.
vi.mock('vscode', () => {
  class Range {
    constructor(
      readonly startLine: number,
      readonly startCharacter: number,
      readonly endLine: number,
      readonly endCharacter: number,
    ) {}
  }
  class MarkdownString {
    value = '';
    isTrusted = true;
    supportHtml = true;
    appendMarkdown(s: string) {
      this.value += s;
      return this;
    }
    appendText(s: string) {
      // VS Code escapes markdown in appendText; mark it so the test can see what went in as text.
      this.value += `‹${s}›`;
      return this;
    }
  }
  class Hover {
    constructor(
      readonly contents: MarkdownString,
      readonly range: Range,
    ) {}
  }
  return { Range, MarkdownString, Hover };
});

import { GroundingHover } from '../../extension/host/groundingHover';
import type { LogSessions } from '../../extension/host/sessions';
import { groundedRecord, LINE, P2_TEXT, R } from './groundingFixture';

const rec = { ...groundedRecord(), line: 1, ledger: { ...groundedRecord().ledger, line: 1 } };
const sessions = { get: () => ({ format: 'spillway', log: { file: 'f', records: [rec], issues: [] } }) } as unknown as LogSessions;
const doc = { uri: {}, lineAt: () => ({ text: LINE }) } as never;
const hoverAt = (character: number) => new GroundingHover(sessions).provideHover(doc, { line: 0, character } as never) as unknown as
  | { contents: { value: string; isTrusted: boolean; supportHtml: boolean }; range: { startCharacter: number; endCharacter: number } }
  | undefined;

describe('GroundingHover', () => {
  it('on the reply: the sentence under the pointer, its label and support, over the sentence range', () => {
    // R+40 is inside sentence 2 ("Seniors ride free with a \"pass\"." spans R+26 .. R+60, counted in groundingFixture.ts)
    const h = hoverAt(R + 40)!;
    expect([h.range.startCharacter, h.range.endCharacter]).toEqual([R + 26, R + 60]);
    expect(h.contents.value).toContain('**Sentence 2 of 3:** ‹✂ evidence lost to the budget›');
    expect(h.contents.value).toContain('**Spilled words:** ‹seniors, ride, free, pass›');
    expect(h.contents.isTrusted).toBe(false);
    expect(h.contents.supportHtml).toBe(false);
  });

  it('on the \\n escape between two sentences: nothing; on the quotes of the literal: nothing', () => {
    expect(hoverAt(R + 24)).toBeUndefined(); // the backslash of \n (decoded 23, between sentences)
    expect(hoverAt(R)).toBeUndefined(); // opening quote
    expect(hoverAt(R + 83)).toBeUndefined(); // closing quote
  });

  it('on a passage text: Knowledge F1 and BM25+ rank', () => {
    const h = hoverAt(LINE.indexOf(P2_TEXT) + 5)!;
    expect(h.contents.value).toContain('**Knowledge F1:** ‹0.400 (full text) · 0.100 (sent part)›');
    expect(h.contents.value).toContain('**BM25+ vs query:** ‹rank 1 of 2 (score 3.50); retriever rank 2›');
    expect(LINE.slice(h.range.startCharacter, h.range.endCharacter)).toBe(`"${P2_TEXT}"`);
  });

  it('elsewhere on the line, or without an analysis: nothing', () => {
    expect(hoverAt(3)).toBeUndefined();
    const { analysis: _a, ...bare } = rec.ledger;
    const plain = { get: () => ({ format: 'spillway', log: { file: 'f', records: [{ ...rec, ledger: bare }], issues: [] } }) } as unknown as LogSessions;
    expect(new GroundingHover(plain).provideHover(doc, { line: 0, character: R + 40 } as never)).toBeUndefined();
  });
});
