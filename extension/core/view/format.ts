/** Number formatting for editor text. Fixed locale so CodeLens text is the same on every machine (and in e2e checks). */
// Created on first use: building an Intl formatter loads locale data, which activation should not pay for.
let groupedFmt: Intl.NumberFormat | undefined;
let percentFmt: Intl.NumberFormat | undefined;
const grouped = { format: (n: number) => (groupedFmt ??= new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 })).format(n) };
const percent = { format: (n: number) => (percentFmt ??= new Intl.NumberFormat('en-US', { maximumFractionDigits: 1 })).format(n) };

/** 7034 → "7,034". */
export function fmt(n: number): string {
  return grouped.format(n);
}

/** 0.4567 → "45.7%". */
export function pct(fraction: number): string {
  return `${percent.format(fraction * 100)}%`;
}

/** "1 passage" / "2 passages". */
export function plural(n: number, one: string, many = `${one}s`): string {
  return `${fmt(n)} ${n === 1 ? one : many}`;
}
