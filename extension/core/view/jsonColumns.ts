/**
 * Decoded-string offsets → raw columns of a JSON string literal on one line. The core reports
 * UTF-16 offsets into decoded strings (a reply sentence's `start`/`end`); the editor needs columns in
 * the raw line, which differ wherever the JSON has escapes. Columns are 0-based UTF-16 code units.
 */

/**
 * Raw column of every decoded UTF-16 unit of the JSON string literal whose opening quote is at
 * `valueStartColumn`: `cols[i]` is where decoded unit `i` starts, and `cols[length]` is the closing
 * quote. `\uXXXX` is 6 raw units for 1 decoded unit (an escaped surrogate pair is 12 for 2), the other
 * escapes (`\n`, `\"`, `\\`, `\/`, …) 2 for 1, anything else 1 for 1 (an unescaped emoji is 2 raw
 * units for its 2 decoded units). An unterminated literal ends at the end of the line.
 */
export function jsonStringColumns(line: string, valueStartColumn: number): Uint32Array {
  // Decoded length ≤ raw length, so one pass with a buffer of the raw size is enough.
  const out = new Uint32Array(Math.max(0, line.length - valueStartColumn) + 1);
  let col = valueStartColumn + 1;
  let n = 0;
  while (col < line.length) {
    const c = line.charCodeAt(col);
    if (c === 0x22 /* " */) break;
    out[n++] = col;
    col += c === 0x5c /* \ */ ? (line[col + 1] === 'u' ? 6 : 2) : 1;
  }
  out[n] = Math.min(col, line.length);
  return out.subarray(0, n + 1);
}

/** Decoded offset at raw column `col` (the unit whose raw form contains `col`), clamped to [0, length]. */
export function decodedOffsetAt(cols: Uint32Array, col: number): number {
  let lo = 0;
  let hi = cols.length - 1;
  if (col <= cols[0]!) return 0;
  if (col >= cols[hi]!) return hi;
  // Last i with cols[i] ≤ col.
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if (cols[mid]! <= col) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}
