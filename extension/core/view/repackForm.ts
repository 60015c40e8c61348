/**
 * The pure half of the re-pack and sweep commands: what the user types (budgets like 8192 or 8k,
 * lists like 4k,8k,16k), what the output file is called, and the lines the prompts show.
 * Token suffixes follow the CLI: k = 1,024, m = 1,048,576 (extension/cli/io.ts parseTokens).
 */

/** Larger than any model window; a typo guard. */
export const MAX_TOKENS = 100_000_000;

/** `8192`, `8,192`, `8k`, `8K`, `1m` → tokens; undefined when it is not such a number. */
export function parseTokenInput(input: string): number | undefined {
  const m = /^(\d+)([kKmM]?)$/.exec(input.trim().replace(/[,_\s]/g, ''));
  if (!m) return undefined;
  const mult = m[2] === '' ? 1 : /k/i.test(m[2]!) ? 1024 : 1024 * 1024;
  const v = Number(m[1]) * mult;
  return Number.isSafeInteger(v) ? v : undefined;
}

/** An error message for the budget input box, or undefined when it is acceptable. */
export function validateBudgetInput(input: string): string | undefined {
  if (input.trim() === '') return 'Enter the new budget in tokens, e.g. 8192 or 8k.';
  const n = parseTokenInput(input);
  if (n === undefined) return 'Enter a whole number of tokens like 8192 or 8k (k = 1,024).';
  if (n < 1) return 'The budget must be at least 1 token.';
  if (n > MAX_TOKENS) return 'That is more than 100,000,000 tokens; no model window is that large.';
  return undefined;
}

/** `4k, 8k,16k` → [4096, 8192, 16384]; sorted ascending, duplicates removed; an error names the bad entry. */
export function parseTokenList(input: string, what: string, min = 1): { ok: true; values: number[] } | { ok: false; error: string } {
  const parts = input.split(/[,;\s]+/).map((p) => p.trim()).filter(Boolean);
  if (parts.length === 0) return { ok: false, error: `Enter at least one ${what}, e.g. 4k,8k,16k.` };
  const values = new Set<number>();
  for (const p of parts) {
    const n = parseTokenInput(p);
    if (n === undefined) return { ok: false, error: `"${p}" is not a whole number like 8192 or 8k.` };
    if (n < min || n > MAX_TOKENS) return { ok: false, error: `"${p}" must be between ${min} and 100,000,000.` };
    values.add(n);
  }
  if (values.size > 64) return { ok: false, error: `At most 64 ${what}s.` };
  return { ok: true, values: [...values].sort((a, b) => a - b) };
}

/** A plan spec as a file-name part: `recent-first+cap:200` → `recent-first-cap200`; no plan → `own-plan`. */
export function planSlug(plan: string | undefined): string {
  if (!plan) return 'own-plan';
  const slug = plan
    .toLowerCase()
    .replace(/[:.]/g, '')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '');
  return slug.slice(0, 60) || 'plan';
}

/**
 * The re-packed log's name beside the source: `<stem>.repacked-<plan-slug>-<budget>.jsonl`,
 * where the stem drops a .jsonl/.ndjson/.json/.log/.txt extension. With an encoding chosen,
 * `-<encoding>` follows the budget.
 */
export function repackOutputName(sourceBase: string, o: { plan?: string; budget: number; encoding?: string }): string {
  const stem = sourceBase.replace(/\.(jsonl|ndjson|json|log|txt)$/i, '') || 'log';
  return `${stem}.repacked-${planSlug(o.plan)}-${o.budget}${o.encoding ? `-${o.encoding.replace(/[^A-Za-z0-9_]+/g, '-')}` : ''}.jsonl`;
}

/** What the budget prompt says about the log's current packing (from its first audited record). */
export function budgetPrompt(first: { window: number; reserve: number; budget: number } | undefined): string {
  const n = (x: number): string => new Intl.NumberFormat('en-US').format(x);
  const now = first ? `Now: window ${n(first.window)} − reserve ${n(first.reserve)} = budget ${n(first.budget)} (first record). ` : '';
  return `${now}Tokens the prompt may use (8192 or 8k); each record keeps its reserve, so its window becomes budget + reserve.`;
}
