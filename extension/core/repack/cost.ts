/**
 * Input-token cost. Prices are the user's (per million input tokens, per model name, `*` for any
 * model not named); none are built in. Cost per 1,000 turns = Σ_turns tokens × price / 10⁶ ÷ turns × 1,000.
 */
import type { Prices } from './types';

export function priceFor(model: string, prices: Prices | undefined): number | undefined {
  if (!prices) return undefined;
  return prices[model] ?? prices['*'];
}

export class CostAccumulator {
  private cost = 0;
  private priced = 0;
  private unpriced = 0;

  constructor(private readonly prices: Prices | undefined) {}

  add(model: string, tokens: number): void {
    const p = priceFor(model, this.prices);
    if (p === undefined) this.unpriced++;
    else {
      this.priced++;
      this.cost += (tokens * p) / 1_000_000;
    }
  }

  /** Cost per 1,000 priced turns, or null when no turn had a price. */
  result(): { per1000Turns: number | null; total: number; pricedTurns: number; unpricedTurns: number } {
    return { per1000Turns: this.priced === 0 ? null : (this.cost / this.priced) * 1000, total: this.cost, pricedTurns: this.priced, unpricedTurns: this.unpriced };
  }
}

/** Parses `gpt-4o=2.5,gpt-4o-mini=0.15` (or a bare number for every model). */
export function parsePrices(s: string): Prices {
  const out: Prices = {};
  for (const part of s.split(',').map((p) => p.trim()).filter(Boolean)) {
    const eq = part.lastIndexOf('=');
    const [model, value] = eq < 0 ? ['*', part] : [part.slice(0, eq).trim(), part.slice(eq + 1).trim()];
    const n = Number(value);
    if (!model || value === '' || !Number.isFinite(n) || n < 0) throw new Error(`price "${part}" is not model=number or a number (per million input tokens)`);
    out[model] = n;
  }
  return out;
}
