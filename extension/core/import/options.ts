/**
 * Options of the chat / OpenTelemetry importers. Every inference the importers make can be set here;
 * the host maps these to the `spillway.import.*` settings and the CLI to flags.
 */
import type { FramingSpec, Role, SegmentKind } from '../log/types';

/**
 * How passages are found inside a message's text.
 * - `tag`: `<doc id="…">…</doc>` pairs (tag name and id attribute configurable); other attributes
 *   `score`, `source`, `date` are read when present.
 * - `numbered`: blocks that start a line with `[n]` (n = the id) and run to the next such line.
 * - `separator`: blocks between lines equal to `separator` (after trimming); ids are `p1`, `p2`, …
 *   Only the part of the message after the first separator line is cut into passages.
 * - `regex`: a user pattern with named groups `id` and `text` (and optional `score`); each match is one
 *   passage block (the whole match is the block, `text` its passage text).
 * - `auto`: `tag` with the configured tag name, else `numbered`, whichever finds blocks first.
 * - `none`: no passages are cut out of messages.
 */
export type SplitterKind = 'auto' | 'tag' | 'numbered' | 'separator' | 'regex' | 'none';

export interface SplitterOptions {
  kind: SplitterKind;
  /** Tag name for `tag` (and `auto`). Default `doc`. */
  tag?: string;
  /** Attribute holding the passage id for `tag`. Default `id`. */
  idAttribute?: string;
  /** Separator line for `separator`. Default `---`. */
  separator?: string;
  /** Pattern for `regex` (JavaScript syntax, named groups `id`, `text`, optional `score`). */
  pattern?: string;
  /** Flags for `regex`; `g` is always added. Default `m`. */
  flags?: string;
}

/**
 * `exact` (default): the segments cut from one message, joined with JOINER ('\n\n'), give back the
 *   message text byte for byte. Wrapper text (tags, `[n]` markers) stays inside the passage segment, and
 *   text that is not separated from a passage by a blank line stays in that passage's segment
 *   (reported as `import-merged`).
 * `split`: every passage block becomes its own segment even when the original separator is not a
 *   blank line; the separators are replaced by JOINER and each change is reported as `import-reflowed`.
 */
export type LayoutMode = 'exact' | 'split';

export interface ImportOptions {
  splitter?: SplitterOptions;
  layout?: LayoutMode;
  /** Which roles' messages are searched for passages. Default system, developer, user. */
  passageRoles?: Role[];
  /** Role → kind overrides (the query message stays `query` unless `queryMessage` says otherwise). */
  roleKinds?: Partial<Record<Role, SegmentKind>>;
  /** Extra role spellings, e.g. `{ "bot": "assistant" }`; built in: model/ai/bot→assistant, human→user, function→tool. */
  roleAliases?: Record<string, Role>;
  /** Index (0-based, in the source message list; negative counts from the end) of the query message. Default: the last user message. */
  queryMessage?: number;
  /** Context window when the source does not say. Default 128000. */
  window?: number;
  /** Output reserve when the source gives no max tokens. Default 4096. */
  reserve?: number;
  /** Encoding when the model name does not map to one. Default: left to the model name; `o200k_base` if unknown. */
  encoding?: string;
  framing?: FramingSpec;
  /** Model name when the source has none. Default `unknown`. */
  model?: string;
  /**
   * `all-kept` (default): the logged request is what was sent, so a `sent` list marks every segment kept.
   * `none`: no `sent` list; fates come from the packing plan.
   */
  sent?: 'all-kept' | 'none';
}

export const DEFAULT_WINDOW = 128_000;
export const DEFAULT_RESERVE = 4096;
export const DEFAULT_TAG = 'doc';
export const DEFAULT_SEPARATOR = '---';
export const DEFAULT_PASSAGE_ROLES: readonly Role[] = ['system', 'developer', 'user'];
export const BUILT_IN_ROLE_ALIASES: Readonly<Record<string, Role>> = {
  model: 'assistant',
  ai: 'assistant',
  bot: 'assistant',
  human: 'user',
  function: 'tool',
};

export interface ResolvedImportOptions {
  splitter: Required<Omit<SplitterOptions, 'pattern'>> & { pattern?: string };
  layout: LayoutMode;
  passageRoles: readonly Role[];
  roleKinds: Partial<Record<Role, SegmentKind>>;
  roleAliases: Record<string, Role>;
  queryMessage?: number;
  window?: number;
  reserve?: number;
  encoding?: string;
  framing?: FramingSpec;
  model?: string;
  sent: 'all-kept' | 'none';
}

export function resolveImportOptions(o: ImportOptions = {}): ResolvedImportOptions {
  const s = o.splitter ?? { kind: 'auto' };
  return {
    splitter: {
      kind: s.kind,
      tag: s.tag ?? DEFAULT_TAG,
      idAttribute: s.idAttribute ?? 'id',
      separator: s.separator ?? DEFAULT_SEPARATOR,
      pattern: s.pattern,
      flags: s.flags ?? 'm',
    },
    layout: o.layout ?? 'exact',
    passageRoles: o.passageRoles ?? DEFAULT_PASSAGE_ROLES,
    roleKinds: o.roleKinds ?? {},
    roleAliases: { ...BUILT_IN_ROLE_ALIASES, ...(o.roleAliases ?? {}) },
    queryMessage: o.queryMessage,
    window: o.window,
    reserve: o.reserve,
    encoding: o.encoding,
    framing: o.framing,
    model: o.model,
    sent: o.sent ?? 'all-kept',
  };
}
