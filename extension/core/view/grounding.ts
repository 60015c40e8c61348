/**
 * Reply grounding in the editor and the panel: the `spillway.grounding.*` settings, Problems-view
 * diagnostics placed on the exact reply sentence or passage text, hover rows, and the compact view
 * model the panel receives. Everything reads the core's TurnAnalysis (`ledger.analysis`); nothing
 * here runs the analysis (that lives in the engine bundle), so the host bundle stays small.
 */
import { parseTree, type Node } from 'jsonc-parser';
import type { AnalysisSettings, PartMatch, SentenceSupport, TurnAnalysis } from '../analysis/types';
import type { Ledger } from '../audit/types';
import type { LogRecord, SegmentKind } from '../log/types';
import type { GroundingSentence, GroundingSupport, GroundingView } from '../../protocol/grounding';
import type { AuditedRecord } from './audited';
import type { DiagnosticDescriptor } from './diagnostics';
import { fmt, pct } from './format';
import { jsonStringColumns } from './jsonColumns';
import type { Checks } from './problems';
import type { Span } from './recordLine';

// ---------------------------------------------------------------- settings

export interface GroundingSettings {
  /** `spillway.grounding.enabled`: run the analysis when auditing logs in the editor. */
  enabled: boolean;
  /** Thresholds that differ from the core's defaults (only valid values are passed on). */
  analysis: Partial<AnalysisSettings>;
}

const SEGMENT_KINDS: readonly SegmentKind[] = ['instructions', 'history', 'query', 'passage', 'tool'];

/** Which `spillway.grounding.<key>` values are numbers, and their valid range. */
const NUMERIC: ReadonlyArray<{ key: keyof AnalysisSettings; min: number; max: number; integer: boolean; minExclusive?: boolean }> = [
  { key: 'supportShare', min: 0, max: 1, integer: false, minExclusive: true },
  { key: 'supportMinWords', min: 1, max: 1000, integer: true },
  { key: 'sentenceMinWords', min: 0, max: 1000, integer: true },
  { key: 'shingleWords', min: 1, max: 50, integer: true },
  { key: 'duplicateResemblance', min: 0, max: 1, integer: false, minExclusive: true },
  { key: 'duplicateContainment', min: 0, max: 1, integer: false, minExclusive: true },
  { key: 'minhashAboveShingles', min: 0, max: 1e9, integer: true },
  { key: 'minhashSize', min: 1, max: 100_000, integer: true },
  { key: 'lexicalByFar', min: 1, max: 1e6, integer: false },
  { key: 'longBlock', min: 1, max: 100_000, integer: true },
  { key: 'staleAfterDays', min: 0, max: 1e6, integer: false },
];

/** `get(key)` reads one `spillway.<key>` value; invalid values fall back to the core's defaults. */
export function readGroundingSettings(get: (key: string) => unknown): GroundingSettings {
  const analysis: Partial<AnalysisSettings> = {};
  for (const n of NUMERIC) {
    const v = get(`grounding.${n.key}`);
    if (typeof v !== 'number' || !Number.isFinite(v) || v > n.max || v < n.min || (n.minExclusive && v === n.min)) continue;
    if (n.integer && !Number.isInteger(v)) continue;
    (analysis as Record<string, number>)[n.key] = v;
  }
  const kinds = get('grounding.supportKinds');
  if (Array.isArray(kinds) && kinds.length > 0 && kinds.every((k) => SEGMENT_KINDS.includes(k as SegmentKind)))
    analysis.supportKinds = [...new Set(kinds as SegmentKind[])];
  const now = get('grounding.now');
  if (typeof now === 'string' && now.trim() !== '' && !Number.isNaN(Date.parse(now))) analysis.now = now.trim();
  return { enabled: get('grounding.enabled') !== false, analysis };
}

// ---------------------------------------------------------------- locating values on the line

export interface GroundingLineMap {
  /** The `reply` string literal, quotes included. */
  reply?: Span;
  /** Each segment's `text` literal by segment id (first segment with that id). */
  texts: Map<string, Span>;
  record: Span;
}

function prop(obj: Node | undefined, key: string): Node | undefined {
  if (!obj || obj.type !== 'object') return undefined;
  for (const p of obj.children ?? []) {
    const [k, v] = p.children ?? [];
    if (k && k.value === key) return v;
  }
  return undefined;
}

/** One parse of a record line: where the reply and the segment texts sit. */
export function locateGroundingLine(lineText: string): GroundingLineMap | undefined {
  const root = parseTree(lineText, [], { disallowComments: true, allowTrailingComma: false });
  if (!root || root.type !== 'object') return undefined;
  const map: GroundingLineMap = { texts: new Map(), record: { start: root.offset, end: root.offset + root.length } };
  const reply = prop(root, 'reply');
  if (reply?.type === 'string') map.reply = { start: reply.offset, end: reply.offset + reply.length };
  const segs = prop(root, 'segments');
  for (const seg of segs?.type === 'array' ? (segs.children ?? []) : []) {
    const id = prop(seg, 'id');
    const text = prop(seg, 'text');
    if (id?.type === 'string' && text?.type === 'string' && !map.texts.has(String(id.value)))
      map.texts.set(String(id.value), { start: text.offset, end: text.offset + text.length });
  }
  return map;
}

/** Columns of the reply sentence [start, end) (decoded UTF-16 offsets) inside the reply literal. */
export function sentenceColumns(lineText: string, reply: Span, start: number, end: number): Span {
  const cols = jsonStringColumns(lineText, reply.start);
  const last = cols.length - 1;
  return { start: cols[Math.min(start, last)]!, end: cols[Math.min(end, last)]! };
}

// ---------------------------------------------------------------- diagnostics

const quote = (id: string): string => JSON.stringify(id);
const words = (ws: readonly string[], max = 8): string => (ws.length > max ? `${ws.slice(0, max).join(', ')}, …` : ws.join(', '));
const matchOf = (s: SentenceSupport): PartMatch | null => (s.kept && (!s.spilled || s.kept.share >= s.spilled.share) ? s.kept : s.spilled);

/**
 * Grounding diagnostics of one record: unsupported sentences, sentences supported only by text the
 * budget cut, lexical mismatch, near-duplicates, middle position and stale passages. Sentence
 * diagnostics cover the sentence inside the `reply` string; passage ones the passage's `text`.
 * Lines are parsed only when there is something to report.
 */
export function groundingDiagnostics(rec: Pick<AuditedRecord, 'line' | 'ledger'>, lineText: string, checks: Checks): DiagnosticDescriptor[] {
  const a = rec.ledger.analysis;
  if (!a) return [];
  const out: DiagnosticDescriptor[] = [];
  let map: GroundingLineMap | undefined;
  let mapped = false;
  const locate = (): GroundingLineMap | undefined => {
    if (!mapped) {
      map = locateGroundingLine(lineText);
      mapped = true;
    }
    return map;
  };
  const whole = (): Span => locate()?.record ?? { start: 0, end: Math.max(lineText.length, 1) };
  const textOf = (id: string): Span | undefined => locate()?.texts.get(id);
  const line = rec.line;
  const push = (span: Span, severity: DiagnosticDescriptor['severity'], code: DiagnosticDescriptor['code'], message: string, related?: DiagnosticDescriptor['related']): void => {
    const d: DiagnosticDescriptor = { line, start: span.start, end: Math.max(span.end, span.start + 1), severity, code, message };
    if (related && related.length) d.related = related;
    out.push(d);
  };
  const fateOf = (id: string) => rec.ledger.segments.find((s) => s.id === id);
  const sentenceSpan = (s: SentenceSupport): Span => {
    const m = locate();
    return m?.reply ? sentenceColumns(lineText, m.reply, s.start, s.end) : whole();
  };
  const relatedText = (id: string, message: string, fromCut = false): NonNullable<DiagnosticDescriptor['related']> => {
    const t = textOf(id);
    if (!t) return [];
    const seg = fateOf(id);
    let span = t;
    if (fromCut && seg?.fate === 'clipped' && seg.cut) {
      const cols = jsonStringColumns(lineText, t.start);
      span = { start: cols[Math.min(seg.cut.char, cols.length - 1)]!, end: t.end - 1 };
    }
    return [{ line, start: span.start, end: Math.max(span.end, span.start + 1), message }];
  };

  for (const s of a.sentences) {
    if (s.label === 'unsupported' && checks.unsupportedSentence) {
      const m = matchOf(s);
      const closest = m
        ? ` Closest: ${m.part === 'kept' ? 'the sent part of' : 'the spilled text of'} ${m.kind} ${quote(m.id)}, ${fmt(m.overlap.length)} of ${fmt(s.contentWords)} content words (${pct(m.share)}).`
        : ' No passage shares a content word with it.';
      push(
        sentenceSpan(s),
        'information',
        'spillway.unsupported-sentence',
        `Reply sentence ${s.index + 1} is not supported by any sent passage (lexical check: a hallucination candidate or a paraphrase).${closest}`,
        m ? relatedText(m.id, `closest ${m.kind} ${quote(m.id)}`) : undefined,
      );
    }
    if (s.label === 'lost' && checks.evidenceLostToBudget && s.spilled) {
      const sp = s.spilled;
      const seg = fateOf(sp.id);
      const where = seg?.fate === 'dropped' ? `dropped ${sp.kind} ${quote(sp.id)}` : `clipped ${sp.kind} ${quote(sp.id)} (cut at character ${fmt(seg?.cut?.char ?? 0)})`;
      push(
        sentenceSpan(s),
        'warning',
        'spillway.evidence-lost-to-budget',
        `Reply sentence ${s.index + 1} is supported only by text the budget cut: ${fmt(sp.overlap.length)} of ${fmt(s.contentWords)} content words (${pct(sp.share)}) are in the ${where}, and no sent part supports it. Words: ${words(sp.overlap)}.`,
        relatedText(sp.id, seg?.fate === 'dropped' ? `${quote(sp.id)} was dropped` : `spilled text of ${quote(sp.id)}`, true),
      );
    }
  }

  const byId = new Map(a.passages.map((p) => [p.id, p]));
  const lexBest = a.lexical?.best ?? null;
  if (checks.lexicalMismatch && a.lexical?.flagged && lexBest !== null) {
    const lx = a.lexical;
    const ratio = lx.ratio === null ? 'the runner-up scores 0' : `${lx.ratio.toFixed(1)}× the runner-up`;
    const tau = lx.tau === null ? '' : ` Kendall's tau-b between retriever rank and BM25+ is ${lx.tau.toFixed(2)}.`;
    push(
      textOf(lexBest) ?? whole(),
      'information',
      'spillway.lexical-mismatch',
      `Passage ${quote(lexBest)} has retriever rank ${lx.bestRank ?? '–'} but is by far the best BM25+ match for the query (${ratio}).${tau}`,
    );
  }
  if (checks.nearDuplicates) {
    for (const p of a.duplicates.pairs) {
      const c = Math.max(p.containmentAB, p.containmentBA);
      const waste = p.wastedTokens > 0 ? `: ${fmt(p.wastedTokens)} tokens sent for repeated text` : ' (not both sent, no tokens wasted)';
      push(
        textOf(p.b) ?? whole(),
        'information',
        'spillway.near-duplicates',
        `Passage ${quote(p.b)} nearly duplicates ${quote(p.a)} (resemblance ${pct(p.resemblance)}, containment up to ${pct(c)}, ${a.duplicates.w}-word shingles, ${a.duplicates.method})${waste}.`,
        relatedText(p.a, `duplicated by ${quote(p.b)}`),
      );
    }
  }
  const carrier = a.position.best;
  if (checks.middlePosition && a.position.flagged && carrier !== null) {
    const ps = a.position;
    push(
      textOf(carrier) ?? whole(),
      'information',
      'spillway.middle-position',
      `Passage ${quote(carrier)}, which carries the reply, was sent at position ${ps.position} of ${ps.of}: the middle third of a long passage block, where models use evidence least (Liu et al., TACL 2024).`,
    );
  }
  if (checks.stalePassage) {
    for (const id of a.staleness.stale) {
      const p = byId.get(id);
      const age = p?.ageDays != null ? `${fmt(Math.floor(p.ageDays))} days old` : 'old';
      push(
        textOf(id) ?? whole(),
        'information',
        'spillway.stale-passage',
        `Passage ${quote(id)} is dated ${p?.date ?? '?'}, ${age} at ${a.staleness.now ?? 'the turn'}: older than ${fmt(a.staleness.staleAfterDays)} days.`,
      );
    }
  }
  return out;
}

// ---------------------------------------------------------------- hover

export interface GroundingHoverRow {
  label: string;
  /** Plain text (ids and words are untrusted; the host renders it as text). */
  value: string;
}

const LABEL_TEXT: Record<SentenceSupport['label'], string> = {
  supported: '✓ supported',
  unsupported: '⚠ unsupported',
  lost: '✂ evidence lost to the budget',
  skipped: '– skipped (too few content words)',
};

/** The sentence of the reply at decoded offset `offset`, if any. */
export function sentenceAt(a: TurnAnalysis, offset: number): SentenceSupport | undefined {
  return a.sentences.find((s) => offset >= s.start && offset < s.end);
}

/** Hover rows for a reply sentence. */
export function sentenceHoverRows(a: TurnAnalysis, s: SentenceSupport): GroundingHoverRow[] {
  const rows: GroundingHoverRow[] = [{ label: `Sentence ${s.index + 1} of ${a.sentences.length}`, value: LABEL_TEXT[s.label] }];
  const part = (m: PartMatch): string => `${m.kind} ${m.id}, ${m.part === 'kept' ? 'sent part' : 'spilled text'} · ${fmt(m.overlap.length)} of ${fmt(s.contentWords)} content words (${pct(m.share)})`;
  if (s.kept) rows.push({ label: s.label === 'supported' ? 'Supported by' : 'Best sent part', value: part(s.kept) });
  if (s.kept?.overlap.length) rows.push({ label: 'Shared words', value: words(s.kept.overlap, 20) });
  if (s.spilled && (s.label === 'lost' || s.label === 'unsupported')) {
    rows.push({ label: s.label === 'lost' ? 'Only in' : 'Best spilled part', value: part(s.spilled) });
    if (s.spilled.overlap.length) rows.push({ label: 'Spilled words', value: words(s.spilled.overlap, 20) });
  }
  if (!s.kept && !s.spilled && s.label !== 'skipped') rows.push({ label: 'Support', value: 'no passage shares a content word' });
  if (a.knowledgeF1 !== null) rows.push({ label: 'Knowledge F1 (reply)', value: `${a.knowledgeF1.toFixed(3)} against ${a.knowledgeF1Basis === 'evidence' ? 'the marked evidence' : 'the best passage'}` });
  return rows;
}

/** Extra hover rows for a passage's text: Knowledge F1, BM25+ rank, sentences it supports. */
export function passageGroundingRows(a: TurnAnalysis, id: string): GroundingHoverRow[] {
  const p = a.passages.find((x) => x.id === id);
  if (!p) return [];
  const rows: GroundingHoverRow[] = [{ label: 'Knowledge F1', value: `${p.f1.toFixed(3)} (full text) · ${p.keptF1.toFixed(3)} (sent part)` }];
  if (p.bm25QueryRank !== null && p.bm25Query !== null)
    rows.push({ label: 'BM25+ vs query', value: `rank ${p.bm25QueryRank} of ${a.passages.length} (score ${p.bm25Query.toFixed(2)})${p.rank !== null ? `; retriever rank ${p.rank}` : ''}` });
  rows.push({ label: 'Reply sentences', value: `${fmt(p.supports)} supported by its sent part${p.lostSupports ? `, ${fmt(p.lostSupports)} only by its spilled text` : ''}` });
  if (p.stale) rows.push({ label: 'Stale', value: `dated ${p.date ?? '?'} (${p.ageDays != null ? fmt(Math.floor(p.ageDays)) : '?'} days)` });
  return rows;
}

// ---------------------------------------------------------------- panel view model

function supportOf(m: PartMatch | null): GroundingSupport | null {
  return m ? { id: m.id, kind: m.kind, part: m.part, share: m.share, overlap: [...m.overlap] } : null;
}

/**
 * The panel's grounding view of one turn. `wordsOf` is the core's word tokenizer (`words` from the
 * analysis; passed in so this module does not pull the tokenizer into the host bundle): it decides
 * which of a lost sentence's words lie after the cut, exactly as the analysis matched them.
 */
export function toGroundingView(a: TurnAnalysis, record: Pick<LogRecord, 'segments'>, ledger: Pick<Ledger, 'segments'>, wordsOf?: (text: string) => string[]): GroundingView {
  const sentences = a.sentences.map((s): GroundingSentence => {
    const m = s.label === 'supported' ? s.kept : s.label === 'lost' ? s.spilled : s.label === 'unsupported' ? matchOf(s) : null;
    const g: GroundingSentence = { index: s.index, start: s.start, end: s.end, text: s.text, label: s.label, contentWords: s.contentWords, support: supportOf(m) };
    if (s.label === 'lost' && s.spilled) {
      const seg = ledger.segments.find((x) => x.id === s.spilled!.id);
      const text = record.segments.find((x) => x.id === s.spilled!.id)?.text ?? '';
      const cutChar = seg?.fate === 'clipped' && seg.cut ? seg.cut.char : null;
      let afterCut = [...s.spilled.overlap];
      let beforeCut: string[] = [];
      if (cutChar !== null && wordsOf) {
        const kept = new Set(wordsOf(text.slice(0, cutChar)));
        beforeCut = s.spilled.overlap.filter((w) => kept.has(w));
        afterCut = s.spilled.overlap.filter((w) => !kept.has(w));
      }
      g.lost = { fate: seg?.fate ?? 'dropped', cutChar, afterCut, beforeCut };
    }
    return g;
  });
  return {
    sentences,
    counts: { ...a.counts },
    knowledgeF1: a.knowledgeF1,
    knowledgeF1Basis: a.knowledgeF1Basis,
    flags: [...a.flags],
    lexical: a.lexical ? { tau: a.lexical.tau, best: a.lexical.best, bestRank: a.lexical.bestRank, ratio: a.lexical.ratio, flagged: a.lexical.flagged } : null,
    duplicates: { pairs: a.duplicates.pairs.map((p) => ({ a: p.a, b: p.b, resemblance: p.resemblance, wastedTokens: p.wastedTokens })), wastedTokens: a.duplicates.wastedTokens },
    stale: [...a.staleness.stale],
    position: { best: a.position.best, position: a.position.position, of: a.position.of, third: a.position.third, flagged: a.position.flagged },
  };
}
