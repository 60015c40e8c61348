/** Tiny assertion helpers with messages that say what the user would have seen instead. */
export class Skip extends Error {}

export function assert(cond: unknown, msg: string): asserts cond {
  if (!cond) throw new Error(msg);
}

export function skip(reason: string): never {
  throw new Skip(reason);
}

export const fmt = (n: number) => n.toLocaleString('en-US');

/** A CSS string literal for an attribute selector; segment ids can be hostile text too. */
export const cssString = (s: string) => `"${s.replace(/\\/g, '\\\\').replace(/"/g, '\\"').replace(/\n/g, '\\a ')}"`;
