// @vitest-environment happy-dom
import { describe, expect, it } from 'vitest';
import { MAX_PAGES, PAGE_SIZE, TurnList } from '../../webview/src/turnList';
import type { TurnRow } from '../../extension/protocol/messages';
import { ROW } from './viewModels';

const rows = (offset: number, n: number): TurnRow[] => Array.from({ length: n }, (_, i) => ({ ...ROW, line: offset + i + 1, turn: offset + i + 1 }));

function list(): { l: TurnList; asked: Array<[number, number]>; picked: number[] } {
  const asked: Array<[number, number]> = [];
  const picked: number[] = [];
  const l = new TurnList({ rowHeight: 24, requestPage: (o, n) => asked.push([o, n]), onSelect: (line) => picked.push(line) });
  document.body.replaceChildren(l.element);
  return { l, asked, picked };
}

describe('virtualised turn list', () => {
  it('holds only the rows in view for 100,000 turns and asks for one page', () => {
    const { l, asked } = list();
    l.setTotal(100_000);
    expect(asked).toEqual([[0, PAGE_SIZE]]);
    l.setPage(0, 100_000, rows(0, PAGE_SIZE));
    // no layout in the DOM test: 24 rows assumed visible + 2 × 8 overscan = 40 rows
    expect(l.element.querySelectorAll('[role="option"]')).toHaveLength(40);
    expect((l.element.firstElementChild as HTMLElement).style.height).toBe('2400000px'); // 100,000 × 24
    expect(l.element.getAttribute('role')).toBe('listbox');
  });

  it('End jumps to the last turn, asking only for the last page', () => {
    const { l, asked } = list();
    l.setTotal(100_000);
    l.setPage(0, 100_000, rows(0, PAGE_SIZE));
    l.element.dispatchEvent(new KeyboardEvent('keydown', { key: 'End', bubbles: true }));
    // the last index 99,999 lies in page 499 (offset 99,800)
    expect(asked.at(-1)).toEqual([99_800, PAGE_SIZE]);
    l.setPage(99_800, 100_000, rows(99_800, PAGE_SIZE));
    const lastRow = l.element.querySelector('#turn-opt-99999')!;
    expect(lastRow.getAttribute('aria-posinset')).toBe('100000');
    expect(lastRow.getAttribute('data-line')).toBe('100000');
    expect(l.element.getAttribute('aria-activedescendant')).toBe('turn-opt-99999');
    expect(l.element.querySelectorAll('[role="option"]').length).toBeLessThanOrEqual(40);
  });

  it('Enter and click select a row by its line', () => {
    const { l, picked } = list();
    l.setTotal(500);
    l.setPage(0, 500, rows(0, PAGE_SIZE));
    l.element.dispatchEvent(new KeyboardEvent('keydown', { key: 'ArrowDown', bubbles: true }));
    l.element.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true }));
    expect(picked).toEqual([2]);
    (l.element.querySelector('[data-line="5"]') as HTMLElement).click();
    expect(picked).toEqual([2, 5]);
    l.setSelected(5);
    expect(l.element.querySelector('[data-line="5"]')!.getAttribute('aria-selected')).toBe('true');
  });

  it('a row selected before its page arrived becomes the active row', () => {
    const { l } = list();
    l.setTotal(500);
    l.setSelected(3);
    l.setPage(0, 500, rows(0, PAGE_SIZE));
    expect(l.element.getAttribute('aria-activedescendant')).toBe('turn-opt-2');
    expect(l.element.querySelector('[data-line="3"]')!.getAttribute('aria-selected')).toBe('true');
  });

  it('keeps at most MAX_PAGES pages', () => {
    const { l } = list();
    l.setTotal(100_000);
    for (let p = 0; p < MAX_PAGES + 10; p++) l.setPage(p * PAGE_SIZE, 100_000, rows(p * PAGE_SIZE, PAGE_SIZE));
    expect(l.loadedPages).toBe(MAX_PAGES);
  });
});
