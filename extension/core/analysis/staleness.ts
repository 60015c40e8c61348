/**
 * Staleness: a passage whose `date` lies more than `staleAfterDays` before "now" is flagged.
 * "Now" is the setting `now` or the record's `time` — never the wall clock, so the same log
 * always gives the same answer.
 */

const DAY_MS = 86_400_000;
// ISO 8601 calendar date, optionally with a time: anything else is reported, not guessed at.
const ISO_DATE = /^\d{4}-\d{2}-\d{2}(?:[T ][0-9:.]+(?:Z|[+-]\d{2}:?\d{2})?)?$/;

/** Milliseconds since the epoch of an ISO date or date-time, or null when it is not one. */
export function parseIsoTime(value: string): number | null {
  if (!ISO_DATE.test(value)) return null;
  const t = Date.parse(value);
  return Number.isFinite(t) ? t : null;
}

/** Age in days of `date` at `now` (negative when the date is in the future), or null if either is not ISO. */
export function ageInDays(date: string, now: string): number | null {
  const d = parseIsoTime(date);
  const n = parseIsoTime(now);
  if (d === null || n === null) return null;
  return (n - d) / DAY_MS;
}

export function isStale(ageDays: number | null, staleAfterDays: number): boolean {
  return ageDays !== null && ageDays > staleAfterDays;
}
