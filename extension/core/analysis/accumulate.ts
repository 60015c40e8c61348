/**
 * Log-level analysis figures in bounded memory: turns are summarised in batches with
 * `summariseAnalyses` (the one place that defines each figure) and the batch summaries merged —
 * counts add, means are re-weighted by the number of turns behind them.
 */
import { summariseAnalyses } from './analyse';
import type { AnalysisSummary, SentenceLabel, TurnAnalysis } from './types';

const BATCH = 2048;

/** A batch summary with the one weight the summary itself does not carry: turns that had a tau. */
interface Part {
  s: AnalysisSummary;
  tauTurns: number;
}

function mergeMean(a: number | null, na: number, b: number | null, nb: number): number | null {
  return na + nb === 0 ? null : ((a ?? 0) * na + (b ?? 0) * nb) / (na + nb);
}

function merge(x: Part, y: Part): Part {
  const a = x.s;
  const b = y.s;
  const sentences = { ...a.sentences };
  for (const k of Object.keys(b.sentences) as SentenceLabel[]) sentences[k] += b.sentences[k];
  const turnsWithReply = a.turnsWithReply + b.turnsWithReply;
  const turnsWithUnsupported = a.turnsWithUnsupported + b.turnsWithUnsupported;
  const turnsWithLostEvidence = a.turnsWithLostEvidence + b.turnsWithLostEvidence;
  const s: AnalysisSummary = {
    ...a,
    turns: a.turns + b.turns,
    turnsWithReply,
    sentences,
    turnsWithUnsupported,
    shareWithUnsupported: turnsWithReply === 0 ? null : turnsWithUnsupported / turnsWithReply,
    turnsWithLostEvidence,
    shareWithLostEvidence: turnsWithReply === 0 ? null : turnsWithLostEvidence / turnsWithReply,
    turnsWithEvidenceCut: a.turnsWithEvidenceCut + b.turnsWithEvidenceCut,
    duplicatePairs: a.duplicatePairs + b.duplicatePairs,
    duplicateWasteTokens: a.duplicateWasteTokens + b.duplicateWasteTokens,
    stalePassages: a.stalePassages + b.stalePassages,
    staleTokens: a.staleTokens + b.staleTokens,
    meanKnowledgeF1: mergeMean(a.meanKnowledgeF1, a.knowledgeF1Turns, b.meanKnowledgeF1, b.knowledgeF1Turns),
    knowledgeF1Turns: a.knowledgeF1Turns + b.knowledgeF1Turns,
    meanEvidenceF1: mergeMean(a.meanEvidenceF1, a.evidenceTurns, b.meanEvidenceF1, b.evidenceTurns),
    evidenceTurns: a.evidenceTurns + b.evidenceTurns,
    meanKendallTau: mergeMean(a.meanKendallTau, x.tauTurns, b.meanKendallTau, y.tauTurns),
    lexicalMismatchTurns: a.lexicalMismatchTurns + b.lexicalMismatchTurns,
    middlePositionTurns: a.middlePositionTurns + b.middlePositionTurns,
  };
  return { s, tauTurns: x.tauTurns + y.tauTurns };
}

export class AnalysisAccumulator {
  private batch: TurnAnalysis[] = [];
  private total: Part | undefined;

  add(a: TurnAnalysis): void {
    this.batch.push(a);
    if (this.batch.length >= BATCH) this.flush();
  }

  private flush(): void {
    if (this.batch.length === 0 && this.total) return;
    const part: Part = { s: summariseAnalyses(this.batch), tauTurns: this.batch.filter((a) => a.lexical?.tau != null).length };
    this.total = this.total ? merge(this.total, part) : part;
    this.batch = [];
  }

  result(): AnalysisSummary {
    this.flush();
    return this.total!.s;
  }
}
