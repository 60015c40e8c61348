/**
 * Cheap recognition of a log's shape from its first lines, for the editor: looks at keys near the
 * start of the first non-blank line without parsing megabyte-long lines.
 */
export type InputFormat = 'spillway' | 'chat' | 'otlp';

const SNIFF = 4096;

export function detectFormat(firstLines: string[]): InputFormat | undefined {
  const first = firstLines.find((l) => l.trim() !== '');
  if (first === undefined) return undefined;
  const head = first.replace(/^\uFEFF/, '').trimStart();
  if (!head.startsWith('{')) return undefined;
  const s = head.slice(0, SNIFF);
  if (/"resourceSpans"\s*:/.test(s)) return 'otlp';
  // A pretty-printed OTLP document: `{` alone on the first line, the key on a later one.
  if (head.trim() === '{' && firstLines.slice(0, 5).some((l) => /^\s*"resourceSpans"\s*:/.test(l))) return 'otlp';
  if (/"v"\s*:\s*1\s*[,}]/.test(s) && /"segments"\s*:/.test(s)) return 'spillway';
  if (/"(messages|contents)"\s*:\s*\[/.test(s)) return 'chat';
  // Keys may come after a long first value: fall back to parsing a short line.
  if (head.length <= 1_000_000) {
    try {
      const v: unknown = JSON.parse(head);
      if (typeof v === 'object' && v !== null) {
        const o = v as Record<string, unknown>;
        if (Array.isArray(o['resourceSpans'])) return 'otlp';
        if (o['v'] === 1 && Array.isArray(o['segments'])) return 'spillway';
        const req = o['request'];
        if (Array.isArray(o['messages']) || Array.isArray(o['contents']) || (typeof req === 'object' && req !== null && Array.isArray((req as Record<string, unknown>)['messages']))) return 'chat';
      }
    } catch {
      return undefined;
    }
  }
  return undefined;
}
