/**
 * JSON Schema (draft-07) of `spillway audit --format json` output, schema id `spillway.audit/1`.
 * Mirrors `types.ts`; a test validates the CLI's real output on every sample log against it.
 */
import { ANALYSIS_SUMMARY_SCHEMA, TURN_ANALYSIS_SCHEMA } from '../analysis/schema';

const int = { type: 'integer' } as const;
const nat = { type: 'integer', minimum: 0 } as const;
const str = { type: 'string' } as const;
const fate = { enum: ['kept', 'clipped', 'dropped'] } as const;
const kinds = ['instructions', 'history', 'query', 'passage', 'tool'] as const;

const cut = { type: 'object', additionalProperties: false, required: ['token', 'char'], properties: { token: nat, char: nat } };

const segment = {
  type: 'object',
  additionalProperties: false,
  required: ['id', 'kind', 'role', 'message', 'tokens', 'keptTokens', 'fate'],
  properties: {
    id: str,
    kind: { enum: kinds },
    role: str,
    message: nat,
    rank: nat,
    score: { type: 'number' },
    tokens: nat,
    keptTokens: nat,
    fate,
    cut,
    planFate: fate,
    large: { type: 'object', additionalProperties: false, required: ['bytes', 'countMs'], properties: { bytes: nat, countMs: nat } },
  },
};

const ledger = {
  type: 'object',
  additionalProperties: false,
  required: ['line', 'conversation', 'turn', 'model', 'encoding', 'window', 'reserve', 'budget', 'framingProfile', 'framing', 'joins', 'used', 'free', 'over', 'spill', 'full', 'byKind', 'segments', 'state', 'fatesFrom', 'plan', 'notes'],
  properties: {
    line: nat,
    conversation: str,
    turn: nat,
    model: str,
    encoding: { enum: ['cl100k_base', 'o200k_base'] },
    window: nat,
    reserve: nat,
    budget: int,
    framingProfile: str,
    framing: nat,
    joins: int,
    used: nat,
    free: nat,
    over: nat,
    spill: nat,
    full: nat,
    byKind: { type: 'object', additionalProperties: false, required: [...kinds], properties: Object.fromEntries(kinds.map((k) => [k, nat])) },
    segments: { type: 'array', items: segment },
    state: { enum: ['ok', 'over-budget', 'over-before-passages'] },
    fatesFrom: { enum: ['plan', 'sent'] },
    plan: str,
    rank1Fate: fate,
    usage: { type: 'object', additionalProperties: false, required: ['prompt', 'drift'], properties: { prompt: nat, drift: int } },
    notes: { type: 'array', items: str },
    analysis: TURN_ANALYSIS_SCHEMA,
    // Per-window sub-ledgers of the fusion layout (re-pack), when present.
    windows: { type: 'array' },
  },
};

export const AUDIT_REPORT_SCHEMA = {
  $schema: 'http://json-schema.org/draft-07/schema#',
  $id: 'spillway.audit/1',
  type: 'object',
  additionalProperties: false,
  required: ['schema', 'file', 'options', 'records', 'errors', 'summary'],
  properties: {
    schema: { const: 'spillway.audit/1' },
    file: str,
    options: {
      type: 'object',
      additionalProperties: false,
      properties: { budget: nat, reserve: nat, encoding: str, plan: str },
    },
    records: { type: 'array', items: ledger },
    errors: {
      type: 'array',
      items: { type: 'object', additionalProperties: false, required: ['line', 'column', 'code', 'message'], properties: { line: nat, column: nat, code: str, message: str } },
    },
    summary: {
      type: 'object',
      additionalProperties: false,
      required: ['turns', 'overBudget', 'overBeforePassages', 'rank1Clipped', 'rank1Dropped', 'spill', 'malformed', 'conversations'],
      properties: Object.fromEntries(['turns', 'overBudget', 'overBeforePassages', 'rank1Clipped', 'rank1Dropped', 'spill', 'malformed', 'conversations'].map((k) => [k, nat])),
    },
    analysisSummary: ANALYSIS_SUMMARY_SCHEMA,
  },
} as const;
