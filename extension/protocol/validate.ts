/**
 * Validation of messages crossing the webview boundary. The host treats everything from the webview
 * as untrusted: `parseWebviewMessage` accepts only the exact shapes of `WebviewMessage` (no unknown
 * types, no extra keys, integers where integers belong) and returns a reason otherwise.
 * The validator table is typed `Record<WebviewMessageType, …>`, so adding a message type to
 * messages.ts without a validator here fails the typecheck.
 */
import type { HostMessage, HostMessageType, PanelState, WebviewMessage, WebviewMessageType } from './messages';
import { checkGroundingView } from './grounding';

export type Parsed<T> = { ok: true; message: T } | { ok: false; error: string };

/** Upper bounds that keep a misbehaving webview from asking for absurd work. */
export const LIMITS = { maxLimit: 500, maxLine: 2 ** 31 - 1, maxString: 4096, maxRequestId: Number.MAX_SAFE_INTEGER } as const;

type Obj = Record<string, unknown>;
type Check = (v: unknown) => boolean;

const isObj = (v: unknown): v is Obj => typeof v === 'object' && v !== null && !Array.isArray(v);
const int = (min: number, max: number): Check => (v) => typeof v === 'number' && Number.isInteger(v) && v >= min && v <= max;
const str: Check = (v) => typeof v === 'string' && v.length <= LIMITS.maxString;
const nonEmptyStr: Check = (v) => str(v) && (v as string).length > 0;
const oneOf = (...vals: string[]): Check => (v) => typeof v === 'string' && vals.includes(v);
const requestId = int(0, LIMITS.maxRequestId);
const line = int(1, LIMITS.maxLine);

const panelState: Check = (v) =>
  shape(v, {}, { line, segmentId: nonEmptyStr, view: oneOf('turn', 'overview', 'compare', 'sweep') }) === undefined;

/**
 * Checks `v` has exactly the required keys plus any of the optional ones, each passing its check.
 * Returns the first problem, or undefined when it fits.
 */
function shape(v: unknown, required: Record<string, Check>, optional: Record<string, Check> = {}): string | undefined {
  if (!isObj(v)) return 'not an object';
  for (const [k, check] of Object.entries(required)) {
    if (!(k in v)) return `missing "${k}"`;
    if (!check(v[k])) return `bad "${k}"`;
  }
  for (const k of Object.keys(v)) {
    if (k in required) continue;
    const check = optional[k];
    if (!check) return `unexpected "${k}"`;
    if (v[k] !== undefined && !check(v[k])) return `bad "${k}"`;
  }
  return undefined;
}

const type = (t: string): Check => (v) => v === t;

const webviewValidators: { [K in WebviewMessageType]: (v: Obj) => string | undefined } = {
  ready: (v) => shape(v, { type: type('ready') }, { state: panelState }),
  requestTurns: (v) =>
    shape(v, { type: type('requestTurns'), requestId, offset: int(0, LIMITS.maxLine), limit: int(1, LIMITS.maxLimit) }),
  requestTurn: (v) => shape(v, { type: type('requestTurn'), requestId, line }),
  requestConversation: (v) => shape(v, { type: type('requestConversation'), requestId, conversation: str }),
  requestOverview: (v) => shape(v, { type: type('requestOverview'), requestId }),
  requestTokenBoundaries: (v) => shape(v, { type: type('requestTokenBoundaries'), requestId, line, segmentId: nonEmptyStr }),
  revealLine: (v) => shape(v, { type: type('revealLine'), line }, { segmentId: nonEmptyStr }),
  metric: (v) => shape(v, { type: type('metric'), name: oneOf('firstPaintMs'), value: (x) => typeof x === 'number' && Number.isFinite(x) && x >= 0 }),
  requestComparisonPage: (v) =>
    shape(v, { type: type('requestComparisonPage'), requestId, offset: int(0, LIMITS.maxLine), limit: int(1, LIMITS.maxLimit) }),
  requestComparisonTurn: (v) => shape(v, { type: type('requestComparisonTurn'), requestId, line }),
};

export function parseWebviewMessage(v: unknown): Parsed<WebviewMessage> {
  if (!isObj(v)) return { ok: false, error: 'message is not an object' };
  const t = v.type;
  if (typeof t !== 'string' || !Object.prototype.hasOwnProperty.call(webviewValidators, t))
    return { ok: false, error: `unknown message type ${JSON.stringify(typeof t === 'string' ? t.slice(0, 64) : t)}` };
  const problem = webviewValidators[t as WebviewMessageType](v);
  return problem ? { ok: false, error: `${t}: ${problem}` } : { ok: true, message: v as unknown as WebviewMessage };
}

// Host → webview: the webview may use this to check what it receives. The payload view models are
// produced by the host's own builders, so here only the envelope (type and scalar fields) is checked.
const arr: Check = (v) => Array.isArray(v);
const obj: Check = (v) => isObj(v);
const num: Check = (v) => typeof v === 'number' && Number.isFinite(v);
const bool: Check = (v) => typeof v === 'boolean';
/** The one payload checked in depth: the grounding view carries untrusted sentence texts. */
const groundingProblem = (g: unknown): string | undefined => (g === undefined ? undefined : checkGroundingView(g));
const hostValidators: { [K in HostMessageType]: (v: Obj) => string | undefined } = {
  logOpened: (v) => shape(v, { type: type('logOpened'), file: str, turns: int(0, LIMITS.maxLine) }, { selectLine: line }),
  logClosed: (v) => shape(v, { type: type('logClosed') }),
  turns: (v) => shape(v, { type: type('turns'), requestId, offset: int(0, LIMITS.maxLine), total: int(0, LIMITS.maxLine), rows: arr }),
  turn: (v) => shape(v, { type: type('turn'), requestId, detail: obj }) ?? groundingProblem((v.detail as Obj).grounding),
  conversation: (v) => shape(v, { type: type('conversation'), requestId, conversation: str, rows: arr }),
  overview: (v) => shape(v, { type: type('overview'), requestId, overview: obj }),
  tokenBoundaries: (v) => shape(v, { type: type('tokenBoundaries'), requestId, line, segmentId: str, boundaries: arr }),
  selectTurn: (v) => shape(v, { type: type('selectTurn'), line }),
  progress: (v) => shape(v, { type: type('progress'), done: num, label: str }, { total: num }),
  error: (v) => shape(v, { type: type('error'), message: str }, { requestId }),
  comparisonReady: (v) => shape(v, { type: type('comparisonReady'), summary: obj, reveal: bool }),
  comparisonPage: (v) =>
    shape(v, { type: type('comparisonPage'), requestId, generation: int(0, LIMITS.maxRequestId), offset: int(0, LIMITS.maxLine), total: int(0, LIMITS.maxLine), rows: arr }),
  comparisonTurn: (v) => shape(v, { type: type('comparisonTurn'), requestId, view: obj }),
  sweepReady: (v) => shape(v, { type: type('sweepReady'), sweep: obj, reveal: bool }),
};

export function parseHostMessage(v: unknown): Parsed<HostMessage> {
  if (!isObj(v)) return { ok: false, error: 'message is not an object' };
  const t = v.type;
  if (typeof t !== 'string' || !Object.prototype.hasOwnProperty.call(hostValidators, t))
    return { ok: false, error: `unknown message type ${JSON.stringify(typeof t === 'string' ? t.slice(0, 64) : t)}` };
  const problem = hostValidators[t as HostMessageType](v);
  return problem ? { ok: false, error: `${t}: ${problem}` } : { ok: true, message: v as unknown as HostMessage };
}

export type { PanelState };
