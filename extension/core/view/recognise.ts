/**
 * Cheap recognition of Spillway logs from their first lines (no tokenizer, no full parse of the file).
 */

export const LOG_EXTENSIONS = ['.jsonl', '.ndjson'] as const;

/** How many non-blank lines recognition looks at. */
export const SNIFF_LINES = 5;

export function hasLogExtension(path: string): boolean {
  const p = path.toLowerCase();
  return LOG_EXTENSIONS.some((e) => p.endsWith(e));
}

/**
 * `record`: one of the first lines is a Spillway v1 record (version 1, a model object and a segments array).
 * `looks`: none is, but one carries the record's tell-tale keys — the file "only looks like a log".
 * `no`: not a Spillway log.
 */
export function sniffSpillway(firstLines: readonly string[]): 'record' | 'looks' | 'no' {
  let looks = false;
  for (const raw of firstLines.slice(0, SNIFF_LINES)) {
    const line = raw.charCodeAt(0) === 0xfeff ? raw.slice(1) : raw;
    if (line.trim() === '') continue;
    try {
      const v: unknown = JSON.parse(line);
      if (typeof v === 'object' && v !== null && !Array.isArray(v)) {
        const o = v as Record<string, unknown>;
        if (o.v === 1 && Array.isArray(o.segments) && typeof o.model === 'object' && o.model !== null) return 'record';
        if ('segments' in o && ('model' in o || 'v' in o)) looks = true;
      }
    } catch {
      if (/"segments"\s*:/.test(line) && /"(model|v)"\s*:/.test(line)) looks = true;
    }
  }
  return looks ? 'looks' : 'no';
}

/** The first `n` non-blank lines of a text, without splitting the whole text. */
export function firstLines(text: string, n = SNIFF_LINES, maxChars = 1 << 20): string[] {
  const out: string[] = [];
  let at = 0;
  while (out.length < n && at < text.length && at < maxChars) {
    let nl = text.indexOf('\n', at);
    if (nl === -1) nl = text.length;
    const line = text.slice(at, nl).replace(/\r$/, '');
    if (line.trim() !== '') out.push(line);
    at = nl + 1;
  }
  return out;
}
