/**
 * Chat framing: the per-message token overhead of the chat format.
 * `chat` is the rule published in OpenAI's cookbook notebook "How to count tokens with tiktoken":
 * every message costs 3 tokens plus the tokens of each of its values (role, content, name),
 * a `name` costs 1 more, and every reply is primed with 3 tokens.
 */
import type { FramingNumbers, FramingSpec } from '../log/types';

export const CHAT_FRAMING: FramingNumbers = { perMessage: 3, perName: 1, priming: 3, countRole: true };
export const NO_FRAMING: FramingNumbers = { perMessage: 0, perName: 0, priming: 0, countRole: false };

export function framingNumbers(spec: FramingSpec | undefined): FramingNumbers {
  if (spec === undefined || spec === 'chat') return CHAT_FRAMING;
  if (spec === 'none') return NO_FRAMING;
  return spec;
}

export function framingName(spec: FramingSpec | undefined): string {
  if (spec === undefined || spec === 'chat') return 'chat';
  if (spec === 'none') return 'none';
  return `custom(${spec.perMessage}/${spec.perName}/${spec.priming}${spec.countRole ? '+role' : ''})`;
}
