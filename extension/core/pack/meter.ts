/**
 * PromptMeter: the exact token count of a prompt while segments are added, clipped or removed.
 * The prompt is a list of chat messages; a message's content is the text of its included segments
 * joined with JOINER, and each included message costs its framing. Every figure is an exact count
 * of the rendered text (memoised by the accountant), never a sum of estimates, so the count stays
 * exact where joining two texts merges or splits tokens at the seam.
 */
import type { FramingNumbers, Segment } from '../log/types';
import { JOINER } from '../log/types';
import type { Accountant } from '../tokens/accountant';
import type { EncodingName } from '../tokens/encoder';
import type { CutPoint } from '../audit/types';

export interface MeterMessage {
  role: string;
  name?: string;
  /** Segment indices in prompt order. */
  members: number[];
  /** Framing cost when the message is present: per-message + role tokens + name tokens + per-name. */
  overhead: number;
}

/**
 * Groups segments into chat messages: equal `message` indices share one message, others stand alone.
 * Overheads are left at 0 for the caller to fill in.
 */
export function groupMessages(segments: readonly Segment[]): { messageOf: number[]; messages: MeterMessage[] } {
  const messageOf: number[] = [];
  const messages: MeterMessage[] = [];
  const byIndex = new Map<number, number>();
  segments.forEach((s, i) => {
    let m: number | undefined;
    if (s.message !== undefined) m = byIndex.get(s.message);
    if (m === undefined) {
      m = messages.length;
      messages.push({ role: s.role, name: s.name, members: [], overhead: 0 });
      if (s.message !== undefined) byIndex.set(s.message, m);
    }
    messages[m]!.members.push(i);
    messageOf.push(m);
  });
  return { messageOf, messages };
}

export class PromptMeter {
  readonly messages: MeterMessage[];
  readonly messageOf: number[];
  /** Exact token count of each segment's whole text. */
  readonly tokens: number[];
  /** Kept characters per segment: undefined = not in the prompt. */
  private readonly kept: (number | undefined)[];
  private readonly msgTotal: number[]; // overhead + content tokens, or 0 when absent
  private readonly isPresent: boolean[];
  private readonly priming: number;
  private total = 0;
  private present = 0;

  constructor(
    readonly segments: readonly Segment[],
    readonly framing: FramingNumbers,
    readonly acct: Accountant,
    readonly encoding: EncodingName,
    /** The record's conversation: lets the accountant reuse counts of the history it re-sends. */
    conversation?: string,
  ) {
    const g = groupMessages(segments);
    this.messageOf = g.messageOf;
    // Filled in place: a record has dozens of messages and a log millions of records.
    for (const m of g.messages) {
      m.overhead =
        framing.perMessage +
        (framing.countRole ? acct.count(encoding, m.role) : 0) +
        (m.name !== undefined ? (framing.countRole ? acct.count(encoding, m.name) : 0) + framing.perName : 0);
    }
    this.messages = g.messages;
    this.tokens = acct.countSegments(encoding, conversation, segments);
    this.kept = segments.map(() => undefined);
    this.msgTotal = this.messages.map(() => 0);
    this.isPresent = this.messages.map(() => false);
    this.priming = framing.priming;
  }

  keptChars(i: number): number | undefined {
    return this.kept[i];
  }

  keptText(i: number): string {
    const k = this.kept[i];
    return k === undefined ? '' : this.segments[i]!.text.slice(0, k);
  }

  /** Exact tokens of the prompt as it stands (0 when empty). */
  used(): number {
    return this.present > 0 ? this.total + this.priming : 0;
  }

  /** Framing tokens of the prompt as it stands. */
  framingTokens(): number {
    if (this.present === 0) return 0;
    let f = this.priming;
    this.messages.forEach((m, i) => {
      if (this.isPresent[i]) f += m.overhead;
    });
    return f;
  }

  messageContent(m: number): string | undefined {
    const parts: string[] = [];
    let any = false;
    for (const i of this.messages[m]!.members) {
      const k = this.kept[i];
      if (k === undefined) continue;
      any = true;
      parts.push(k === this.segments[i]!.text.length ? this.segments[i]!.text : this.segments[i]!.text.slice(0, k));
    }
    return any ? parts.join(JOINER) : undefined;
  }

  /** Exact content tokens of message m with the kept characters given by `keptOf`. */
  private contentTokens(m: number, keptOf: (i: number) => number | undefined): number | undefined {
    const members = this.messages[m]!.members;
    // One whole segment: its own count, already known (no join, no hashing again).
    if (members.length === 1) {
      const i = members[0]!;
      const k = keptOf(i);
      if (k === undefined) return undefined;
      if (k >= this.segments[i]!.text.length) return this.tokens[i]!;
    }
    const parts: string[] = [];
    for (const i of members) {
      const k = keptOf(i);
      if (k === undefined) continue;
      const t = this.segments[i]!.text;
      parts.push(k >= t.length ? t : t.slice(0, k));
    }
    return parts.length ? this.acct.count(this.encoding, parts.join(JOINER)) : undefined;
  }

  /**
   * Exact tokens of the prompt with exactly the segments `whole(i)` included, uncut — without
   * changing the meter (for the whole-prompt figure and the mandatory-only check).
   */
  countWhole(whole: (i: number) => boolean): number {
    let total = 0;
    let present = 0;
    const keptOf = (i: number): number | undefined => (whole(i) ? this.segments[i]!.text.length : undefined);
    this.messages.forEach((msg, m) => {
      const c = this.contentTokens(m, keptOf);
      if (c === undefined) return;
      present++;
      total += msg.overhead + c;
    });
    return present ? total + this.priming : 0;
  }

  private refresh(m: number): void {
    const c = this.contentTokens(m, (i) => this.kept[i]);
    const after = c === undefined ? 0 : this.messages[m]!.overhead + c;
    const was = this.isPresent[m]!;
    const now = c !== undefined;
    this.present += (now ? 1 : 0) - (was ? 1 : 0);
    this.isPresent[m] = now;
    this.total += after - this.msgTotal[m]!;
    this.msgTotal[m] = after;
  }

  /** Sets segment i's kept characters (undefined removes it) and updates the exact total. */
  set(i: number, chars: number | undefined): void {
    if (this.kept[i] === chars) return;
    this.kept[i] = chars;
    this.refresh(this.messageOf[i]!);
  }

  include(i: number): void {
    this.set(i, this.segments[i]!.text.length);
  }

  exclude(i: number): void {
    this.set(i, undefined);
  }

  /** Includes segment i whole if the prompt then fits `budget`; otherwise leaves it out. */
  tryInclude(i: number, budget: number): boolean {
    this.include(i);
    if (this.used() <= budget) return true;
    this.exclude(i);
    return false;
  }

  /** Includes several segments together (e.g. one history turn) only if all of them fit. */
  tryIncludeAll(indices: readonly number[], budget: number): boolean {
    for (const i of indices) this.include(i);
    if (this.used() <= budget) return true;
    for (const i of indices) this.exclude(i);
    return false;
  }

  /**
   * Includes the longest clean prefix of segment i (at a token boundary of the segment's own
   * encoding, never inside a character) such that the prompt fits `budget`, if that prefix has at
   * least `minTokens` tokens. Returns the cut point, or undefined (segment left out).
   */
  clipToFit(i: number, budget: number, minTokens: number): CutPoint | undefined {
    this.exclude(i);
    const base = this.used();
    const room = budget - base;
    if (room <= 0) return undefined;
    const text = this.segments[i]!.text;
    const enc = this.acct.loadedEncoder(this.encoding);
    const ids = this.acct.encode(this.encoding, text);
    const m = this.messageOf[i]!;
    const alone = !this.isPresent[m];
    // First guess: all the room minus what the message (or the seam) itself costs.
    const seam = alone ? this.messages[m]!.overhead + (this.present === 0 ? this.priming : 0) : this.acct.count(this.encoding, JOINER);
    let k = Math.min(ids.length - 1, room - seam);
    let best: CutPoint | undefined;
    for (let guard = 0; guard < 64 && k >= minTokens; guard++) {
      const p = cleanPrefix(enc, text, ids, k);
      if (p.tokens < minTokens) break;
      this.set(i, p.chars);
      const over = this.used() - budget;
      if (over <= 0) {
        best = { token: p.tokens, char: p.chars };
        // The guess may leave a token of room: try one more before settling.
        if (over === 0 || p.tokens + 1 >= ids.length) break;
        const q = cleanPrefix(enc, text, ids, p.tokens + 1);
        if (q.tokens <= p.tokens) break;
        this.set(i, q.chars);
        if (this.used() <= budget) {
          best = { token: q.tokens, char: q.chars };
          k = q.tokens + 1;
          continue;
        }
        this.set(i, p.chars);
        break;
      }
      k = p.tokens - Math.max(1, over);
    }
    if (!best) {
      this.exclude(i);
      return undefined;
    }
    this.set(i, best.char);
    return best;
  }
}

/**
 * The largest k' ≤ k such that the first k' tokens of `ids` decode to a prefix of `text`
 * (so the cut never splits a character), with that prefix's UTF-16 length.
 */
export function cleanPrefix(enc: { decode(ids: readonly number[]): string }, text: string, ids: readonly number[], k: number): { tokens: number; chars: number } {
  let n = Math.max(0, Math.min(k, ids.length));
  while (n > 0) {
    const s = enc.decode(ids.slice(0, n));
    if (text.startsWith(s) && !s.endsWith('\uFFFD')) return { tokens: n, chars: s.length };
    n--;
  }
  return { tokens: 0, chars: 0 };
}
