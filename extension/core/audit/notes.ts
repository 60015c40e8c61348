/** Plain-words notes shared by the ledger and the editor (kept free of heavy imports: the host bundle uses it). */

/** e.g. "passage p7 is 2.3 MB; counted in 0.4 s" (the first count; later ones come from the memo). */
export function largeSegmentNote(kind: string, id: string, info: { bytes: number; countMs: number }): string {
  return `${kind} ${id} is ${(info.bytes / 1e6).toFixed(1)} MB; counted in ${(info.countMs / 1000).toFixed(1)} s`;
}
