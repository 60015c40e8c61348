/** Number formatting for editor text. Fixed locale so CodeLens text is the same on every machine (and in e2e checks). */
const grouped = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });
const percent = new Intl.NumberFormat('en-US', { maximumFractionDigits: 1 });

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
