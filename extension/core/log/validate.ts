/**
 * Record validation against the v1 JSON Schema (ajv), turned into plain-words issues with a
 * 1-based column pointing at the offending value. Position finding (jsonc-parser) runs only on
 * the failure path, so valid lines pay for the schema check alone.
 */
import Ajv, { type ErrorObject } from 'ajv';
import { findNodeAtLocation, parseTree, parse as lenientParse, printParseErrorCode, type ParseError } from 'jsonc-parser';
import schema from '../../../schema/spillway-log-v1.schema.json';
import { encodingForModel, isEncodingName, ENCODINGS } from '../tokens/encoder';
import type { LogIssue, LogRecord } from './types';

const ajv = new Ajv({ allErrors: false, strict: false });
const validateSchema = ajv.compile<LogRecord>(schema);

type PathPart = string | number;

function pointerToPath(pointer: string): PathPart[] {
  if (!pointer) return [];
  return pointer
    .slice(1)
    .split('/')
    .map((p) => p.replace(/~1/g, '/').replace(/~0/g, '~'))
    .map((p) => (/^\d+$/.test(p) ? Number(p) : p));
}

function pathLabel(path: PathPart[]): string {
  let s = '';
  for (const p of path) s += typeof p === 'number' ? `[${p}]` : s ? `.${p}` : p;
  return s || 'record';
}

/** 1-based column of the value at `path` in `text`, or of the nearest ancestor that exists. */
export function columnOf(text: string, path: PathPart[]): number {
  const root = parseTree(text);
  if (!root) return 1;
  for (let n = path.length; n >= 0; n--) {
    const node = findNodeAtLocation(root, path.slice(0, n));
    if (node) return node.offset + 1;
  }
  return 1;
}

function describe(err: ErrorObject): { code: string; path: PathPart[]; message: string } {
  const path = pointerToPath(err.instancePath);
  const where = pathLabel(path);
  switch (err.keyword) {
    case 'required': {
      const missing = (err.params as { missingProperty: string }).missingProperty;
      const full = where === 'record' ? missing : `${where}.${missing}`;
      return { code: 'missing-field', path, message: `missing field "${full}"` };
    }
    case 'type':
      return { code: 'wrong-type', path, message: `wrong type: "${where}" must be ${(err.params as { type: string }).type}` };
    case 'enum':
      return {
        code: 'wrong-type',
        path,
        message: `wrong value: "${where}" must be one of ${(err.params as { allowedValues: unknown[] }).allowedValues.map((v) => JSON.stringify(v)).join(', ')}`,
      };
    case 'const':
      return { code: 'wrong-type', path, message: `wrong value: "${where}" must be ${JSON.stringify((err.params as { allowedValue: unknown }).allowedValue)}` };
    default:
      return { code: 'wrong-type', path, message: `wrong value: "${where}" ${err.message ?? 'is invalid'}` };
  }
}

/** Parses and validates one line. Returns the record, or one issue that says what is wrong and where. */
export function parseRecordLine(text: string, line: number): { record: LogRecord } | { issue: LogIssue } {
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (e) {
    return { issue: jsonIssue(text, line, e) };
  }
  if (typeof value !== 'object' || value === null || Array.isArray(value)) {
    return { issue: { line, column: 1, code: 'wrong-type', message: 'a record must be a JSON object' } };
  }
  if (!validateSchema(value)) {
    const err = validateSchema.errors?.[0];
    if (!err) return { issue: { line, column: 1, code: 'wrong-type', message: 'record does not match the v1 format' } };
    const d = describe(err);
    return { issue: { line, column: columnOf(text, d.path), code: d.code, message: d.message } };
  }
  const record = value as LogRecord;
  const semantic = semanticIssue(record, text, line);
  return semantic ? { issue: semantic } : { record };
}

/** Plain words for jsonc-parser's error codes. */
const JSON_REASONS: Record<string, string> = {
  InvalidSymbol: 'unexpected character',
  InvalidNumberFormat: 'malformed number',
  PropertyNameExpected: 'expected a property name in double quotes',
  ValueExpected: 'expected a value',
  ColonExpected: "expected ':' after the property name",
  CommaExpected: "expected ',' between items",
  CloseBraceExpected: "expected '}' (the object is not closed)",
  CloseBracketExpected: "expected ']' (the array is not closed)",
  EndOfFileExpected: 'unexpected text after the end of the record',
  InvalidCommentToken: 'comments are not allowed in JSON',
  UnexpectedEndOfComment: 'comments are not allowed in JSON',
  UnexpectedEndOfString: 'string is not closed',
  UnexpectedEndOfNumber: 'number is cut short',
  InvalidUnicode: 'invalid \\u escape',
  InvalidEscapeCharacter: 'invalid escape sequence in a string',
  InvalidCharacter: 'control character inside a string',
};

function jsonIssue(text: string, line: number, e: unknown): LogIssue {
  const errors: ParseError[] = [];
  lenientParse(text, errors, { disallowComments: true, allowTrailingComma: false, allowEmptyContent: false });
  const first = errors[0];
  const reason = first ? (JSON_REASONS[printParseErrorCode(first.error)] ?? printParseErrorCode(first.error)) : (e as Error).message;
  const column = first ? first.offset + 1 : 1;
  return { line, column, code: 'bad-json', message: `bad JSON: ${reason}` };
}

/** Checks the schema cannot express: encodings, unique segment ids, references. */
function semanticIssue(record: LogRecord, text: string, line: number): LogIssue | undefined {
  const enc = record.model.encoding;
  if (enc !== undefined && !isEncodingName(enc)) {
    return {
      line,
      column: columnOf(text, ['model', 'encoding']),
      code: 'unknown-encoding',
      message: `unknown encoding "${enc}" (known: ${ENCODINGS.join(', ')})`,
    };
  }
  if (enc === undefined && !encodingForModel(record.model.name)) {
    return {
      line,
      column: columnOf(text, ['model', 'name']),
      code: 'unknown-encoding',
      message: `no encoding given and none known for model "${record.model.name}": add model.encoding (${ENCODINGS.join(', ')})`,
    };
  }
  if (record.model.reserve >= record.model.window) {
    return { line, column: columnOf(text, ['model', 'reserve']), code: 'wrong-type', message: `model.reserve (${record.model.reserve}) must be smaller than model.window (${record.model.window})` };
  }
  const seen = new Set<string>();
  for (let i = 0; i < record.segments.length; i++) {
    const id = record.segments[i]!.id;
    if (seen.has(id)) return { line, column: columnOf(text, ['segments', i, 'id']), code: 'duplicate-id', message: `segment id "${id}" is used twice` };
    seen.add(id);
  }
  if (record.sent) {
    for (let i = 0; i < record.sent.length; i++) {
      const s = record.sent[i]!;
      if (!seen.has(s.id)) return { line, column: columnOf(text, ['sent', i, 'id']), code: 'unknown-segment', message: `sent[${i}] names segment "${s.id}", which the record does not have` };
    }
  }
  return undefined;
}
