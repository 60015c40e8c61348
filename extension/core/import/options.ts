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
    roleAliases: { ...BUILT_IN_ROLE_ALIASES, ...Object.fromEntries(Object.entries(o.roleAliases ?? {}).map(([k, v]) => [k.toLowerCase(), v])) },
    queryMessage: o.queryMessage,
    window: o.window,
    reserve: o.reserve,
    encoding: o.encoding,
    framing: o.framing,
    model: o.model,
    sent: o.sent ?? 'all-kept',
  };
}

/**
 * The `spillway.import.*` settings (for the host's `contributes.configuration`), one per option.
 * Keys are relative to `spillway.import`.
 */
export const IMPORT_SETTINGS = {
  splitter: { type: 'string', enum: ['auto', 'tag', 'numbered', 'separator', 'regex', 'none'], default: 'auto', description: 'How passages are found inside a chat message of an imported log.' },
  tag: { type: 'string', default: DEFAULT_TAG, description: 'Tag name for the tag splitter: <doc id="…">…</doc>.' },
  idAttribute: { type: 'string', default: 'id', description: 'Attribute holding the passage id for the tag splitter.' },
  separator: { type: 'string', default: DEFAULT_SEPARATOR, description: 'Separator line for the separator splitter.' },
  pattern: { type: 'string', default: '', description: 'Regular expression for the regex splitter, with named groups id, text and optional score.' },
  layout: { type: 'string', enum: ['exact', 'split'], default: 'exact', description: 'exact: segments re-join to each message byte for byte; split: one segment per passage, separators normalised (reported).' },
  passageRoles: { type: 'array', items: { type: 'string', enum: ['system', 'developer', 'user', 'assistant', 'tool'] }, default: [...DEFAULT_PASSAGE_ROLES], description: 'Roles whose messages are searched for passages.' },
  roleKinds: { type: 'object', default: {}, description: 'Role → segment kind overrides, e.g. {"developer": "instructions"}.' },
  roleAliases: { type: 'object', default: {}, description: 'Extra role spellings → role, e.g. {"bot": "assistant"}.' },
  queryMessage: { type: ['number', 'null'], default: null, description: 'Index of the query message (negative counts from the end); empty: the last user message.' },
  window: { type: 'number', default: DEFAULT_WINDOW, description: 'Context window for imported records (logs do not record it).' },
  reserve: { type: 'number', default: DEFAULT_RESERVE, description: 'Output reserve when the request gives no max tokens.' },
  encoding: { type: 'string', enum: ['', 'cl100k_base', 'o200k_base'], default: '', description: 'Encoding when the model name does not give one (empty: o200k_base).' },
  sent: { type: 'string', enum: ['all-kept', 'none'], default: 'all-kept', description: 'all-kept: the logged request is what was sent; none: fates come from the packing plan.' },
} as const;

const SPLITTER_KINDS: readonly SplitterKind[] = ['auto', 'tag', 'numbered', 'separator', 'regex', 'none'];
const KINDS: readonly SegmentKind[] = ['instructions', 'history', 'query', 'passage', 'tool'];
const ROLE_NAMES: readonly Role[] = ['system', 'developer', 'user', 'assistant', 'tool'];

/**
 * Settings values (keys relative to `spillway.import`, e.g. from `getConfiguration('spillway.import')`)
 * → ImportOptions. Values of the wrong type are ignored and named in `problems`.
 */
export function importOptionsFromSettings(get: (key: string) => unknown): { options: ImportOptions; problems: string[] } {
  const problems: string[] = [];
  const str = (k: string): string | undefined => {
    const v = get(k);
    if (v === undefined || v === null || v === '') return undefined;
    if (typeof v === 'string') return v;
    problems.push(`spillway.import.${k} must be a string`);
    return undefined;
  };
  const num = (k: string): number | undefined => {
    const v = get(k);
    if (v === undefined || v === null) return undefined;
    if (typeof v === 'number' && Number.isInteger(v)) return v;
    problems.push(`spillway.import.${k} must be a whole number`);
    return undefined;
  };
  const o: ImportOptions = {};
  const kind = str('splitter') ?? 'auto';
  if (!SPLITTER_KINDS.includes(kind as SplitterKind)) problems.push(`spillway.import.splitter "${kind}" is not one of ${SPLITTER_KINDS.join(', ')}`);
  o.splitter = { kind: SPLITTER_KINDS.includes(kind as SplitterKind) ? (kind as SplitterKind) : 'auto', tag: str('tag'), idAttribute: str('idAttribute'), separator: str('separator'), pattern: str('pattern') };
  const layout = str('layout');
  if (layout === 'exact' || layout === 'split') o.layout = layout;
  else if (layout !== undefined) problems.push(`spillway.import.layout "${layout}" is not exact or split`);
  const roles = get('passageRoles');
  if (Array.isArray(roles)) {
    o.passageRoles = roles.filter((r): r is Role => ROLE_NAMES.includes(r as Role));
    for (const r of roles) if (!ROLE_NAMES.includes(r as Role)) problems.push(`spillway.import.passageRoles: "${String(r)}" is not a role`);
  }
  const rk = get('roleKinds');
  if (rk && typeof rk === 'object') {
    o.roleKinds = {};
    for (const [r, k] of Object.entries(rk as Record<string, unknown>)) {
      if (ROLE_NAMES.includes(r as Role) && KINDS.includes(k as SegmentKind)) o.roleKinds[r as Role] = k as SegmentKind;
      else problems.push(`spillway.import.roleKinds: "${r}": "${String(k)}" is not role: kind`);
    }
  }
  const ra = get('roleAliases');
  if (ra && typeof ra === 'object') {
    o.roleAliases = {};
    for (const [a, r] of Object.entries(ra as Record<string, unknown>)) {
      if (ROLE_NAMES.includes(r as Role)) o.roleAliases[a.toLowerCase()] = r as Role;
      else problems.push(`spillway.import.roleAliases: "${a}" must name one of ${ROLE_NAMES.join(', ')}`);
    }
  }
  o.queryMessage = num('queryMessage');
  o.window = num('window');
  o.reserve = num('reserve');
  const enc = str('encoding');
  if (enc === 'cl100k_base' || enc === 'o200k_base') o.encoding = enc;
  else if (enc !== undefined) problems.push(`spillway.import.encoding "${enc}" is not cl100k_base or o200k_base`);
  const sent = str('sent');
  if (sent === 'all-kept' || sent === 'none') o.sent = sent;
  else if (sent !== undefined) problems.push(`spillway.import.sent "${sent}" is not all-kept or none`);
  return { options: o, problems };
}
