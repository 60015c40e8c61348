/** Joins byte arrays into one (returns the only part itself when there is one). */
export function concatBytes(parts: readonly Uint8Array[], total = parts.reduce((a, p) => a + p.length, 0)): Uint8Array {
  if (parts.length === 1) return parts[0]!;
  const out = new Uint8Array(total);
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}
