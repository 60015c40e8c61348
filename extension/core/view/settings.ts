/**
 * The `spillway.*` settings, normalised from whatever the configuration holds (users edit JSON by
 * hand, so every value is checked and falls back to its default), and how they shape an audit.
 */
import type { AuditOptions } from '../audit/types';
import type { FramingSpec, LogRecord } from '../log/types';
import { ALL_CHECKS, DEFAULT_CHECKS, type Checks } from './problems';
import { readGroundingSettings, type GroundingSettings } from './grounding';

export interface EditorSettings {
  /** Encoding for records that name none and whose model name maps to none (checked by the ledger). */
  defaultEncoding?: string;
  /** Output reserve applied to every record unless set per file; undefined = each record's own. */
  defaultReserve?: number;
  /** `record` = each record's own framing (chat when absent). */
  framing: 'record' | FramingSpec;
  checks: Checks;
  logFilePatterns: string[];
  maxLineLength: number;
  /** `spillway.grounding.*`: whether the audit runs the grounding analysis, and its thresholds. */
  grounding: GroundingSettings;
}

/** Per-file choices made with the "Change Budget, Reserve or Encoding" command. */
export interface LogOverrides {
  budget?: number;
  reserve?: number;
  encoding?: string;
}

export const DEFAULT_MAX_LINE_LENGTH = 16 * 1024 * 1024;

const isCount = (v: unknown): v is number => typeof v === 'number' && Number.isInteger(v) && v >= 0;

function framingOf(v: unknown): EditorSettings['framing'] {
  if (v === 'chat' || v === 'none' || v === 'record') return v;
  if (typeof v === 'object' && v !== null) {
    const o = v as Record<string, unknown>;
    if (isCount(o.perMessage) && isCount(o.perName) && isCount(o.priming))
      return { perMessage: o.perMessage, perName: o.perName, priming: o.priming, countRole: o.countRole !== false };
  }
  return 'record';
}

/** `get(key)` reads one `spillway.<key>` value. */
export function readEditorSettings(get: (key: string) => unknown): EditorSettings {
  const enc = get('defaultEncoding');
  const reserve = get('defaultReserve');
  const checksRaw = get('diagnostics.enabled');
  const checks: Checks = { ...DEFAULT_CHECKS };
  if (typeof checksRaw === 'object' && checksRaw !== null) {
    for (const k of Object.keys(ALL_CHECKS) as Array<keyof Checks>) {
      const v = (checksRaw as Record<string, unknown>)[k];
      if (k === 'usageDriftTolerance') continue;
      if (typeof v === 'boolean') checks[k] = v;
    }
  }
  const tol = get('diagnostics.usageDriftTolerance');
  if (isCount(tol)) checks.usageDriftTolerance = tol;
  const patterns = get('logFilePatterns');
  const max = get('maxLineLength');
  const s: EditorSettings = {
    framing: framingOf(get('framing')),
    checks,
    logFilePatterns: Array.isArray(patterns) ? patterns.filter((p): p is string => typeof p === 'string' && p.length > 0) : [],
    maxLineLength: isCount(max) && max > 0 ? max : DEFAULT_MAX_LINE_LENGTH,
    grounding: readGroundingSettings(get),
  };
  if (typeof enc === 'string' && enc !== '' && enc !== 'fromRecord') s.defaultEncoding = enc;
  if (isCount(reserve)) s.defaultReserve = reserve;
  return s;
}

/** Audit options for a log: per-file overrides win over settings. */
export function auditOptionsFor(settings: EditorSettings, overrides: LogOverrides | undefined): AuditOptions {
  const o: AuditOptions = {};
  const reserve = overrides?.reserve ?? settings.defaultReserve;
  if (reserve !== undefined) o.reserve = reserve;
  if (overrides?.budget !== undefined) o.budget = overrides.budget;
  if (overrides?.encoding !== undefined) o.encoding = overrides.encoding;
  return o;
}

/**
 * Applies record-level defaults from the settings without touching the source record: the framing
 * profile (unless `record`) and the default encoding for records that name no usable encoding.
 * `encodingForModel` is the tokenizer's model table (passed in so this module stays free of the tokenizer).
 */
export function withSettingDefaults(
  record: LogRecord,
  settings: EditorSettings,
  encodingForModel: (model: string) => string | undefined,
): LogRecord {
  let out = record;
  if (settings.framing !== 'record') out = { ...out, framing: settings.framing };
  if (settings.defaultEncoding && !record.model.encoding && !encodingForModel(record.model.name))
    out = { ...out, model: { ...record.model, encoding: settings.defaultEncoding } };
  return out;
}

export type OverrideField = keyof LogOverrides;

/** Validates a user-typed budget or reserve; returns an error message or undefined. */
export function validateTokenCount(input: string, field: 'budget' | 'reserve'): string | undefined {
  const t = input.trim().replace(/[,_\s]/g, '');
  if (t === '') return undefined; // empty = clear the override
  if (!/^\d+$/.test(t)) return `Enter a whole number of tokens (digits only), or leave empty to use the log's own ${field}.`;
  const n = Number(t);
  if (field === 'budget' && n < 1) return 'The budget must be at least 1 token.';
  if (n > 100_000_000) return 'That is more than 100,000,000 tokens; no model window is that large.';
  return undefined;
}

export function parseTokenCount(input: string): number | undefined {
  const t = input.trim().replace(/[,_\s]/g, '');
  return t === '' ? undefined : Number(t);
}
