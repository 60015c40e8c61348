/** Number formatting shared by every view (fixed locale so figures read the same everywhere). */
const intFmt = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });

export function int(n: number): string {
  return intFmt.format(n);
}

/** `part` as a percentage of `whole`, one decimal ("–" when the whole is 0). */
export function pct(part: number, whole: number): string {
  if (!whole) return '–';
  return `${(Math.round((part / whole) * 1000) / 10).toFixed(1)}%`;
}

/** A 0..1+ ratio as a percentage, one decimal. */
export function ratioPct(r: number): string {
  return `${(Math.round(r * 1000) / 10).toFixed(1)}%`;
}

export function score(n: number | undefined): string {
  if (n === undefined) return '–';
  return Math.abs(n) >= 100 ? n.toFixed(0) : n.toPrecision(3);
}
