import { describe, expect, it } from 'vitest';
import { f1Score } from '../../../extension/core/analysis/f1';
import { normalizeAnswer, squadTokens, words, contentWords } from '../../../extension/core/analysis/normalize';

// Source: the official SQuAD v1.1 evaluation script (Rajpurkar et al., 2016), functions
// `normalize_answer` (lower → remove_punc → remove_articles → white_space_fix) and `f1_score`
// (Counter overlap; 0 when nothing overlaps). Expected values below are worked out by hand.

describe('normalizeAnswer (SQuAD v1.1)', () => {
  it('lower-cases, deletes ASCII punctuation, drops whole-word articles, collapses whitespace', () => {
    // "The Blue Line, an express!" → lower "the blue line, an express!" → remove_punc
    // "the blue line an express" → remove_articles " blue line   express" → "blue line express"
    expect(normalizeAnswer('The Blue Line, an express!')).toBe('blue line express');
  });
  it('removes punctuation before articles, so "A.N." becomes the article "an" and vanishes', () => {
    // lower "a.n." → remove_punc "an" → remove_articles " " → ""
    expect(normalizeAnswer('A.N.')).toBe('');
  });
  it('keeps article letters inside words ("theatre", "another", "anthem")', () => {
    expect(normalizeAnswer('The theatre, another anthem')).toBe('theatre another anthem');
  });
  it("deletes apostrophes and hyphens without a space (don't → dont, reduced-fare → reducedfare)", () => {
    expect(squadTokens("Don't use a reduced-fare card")).toEqual(['dont', 'use', 'reducedfare', 'card']);
  });
  it('uses a Unicode word boundary like Python 3 re: "a" after "é" is not a whole word', () => {
    // Python 3: re.sub(r'\b(a|an|the)\b', ' ', 'café a la carte') → 'café   la carte'; in 'éa' the
    // "a" follows a word character, so no boundary and it stays.
    expect(normalizeAnswer('café a la carte')).toBe('café la carte');
    expect(normalizeAnswer('éa')).toBe('éa');
  });
  it('leaves non-ASCII punctuation alone (string.punctuation is ASCII only)', () => {
    expect(normalizeAnswer('“fare” — zone')).toBe('“fare” — zone');
  });
});

describe('f1Score (SQuAD v1.1 f1_score), hand-worked', () => {
  it('a prediction that adds words', () => {
    // pred "The night bus leaves at midnight" → [night, bus, leaves, at, midnight] (5 tokens)
    // gold "midnight" → [midnight] (1 token); common = 1
    // precision = 1/5, recall = 1/1, F1 = 2·(1/5)·1 / (1/5 + 1) = (2/5)/(6/5) = 1/3
    expect(f1Score('The night bus leaves at midnight', 'midnight')).toBeCloseTo(1 / 3, 12);
  });
  it('repeated words: the overlap is clipped by counts', () => {
    // pred [fare, fare, fare, zone] → {fare: 3, zone: 1}; gold [fare, zone, zone] → {fare: 1, zone: 2}
    // common = min(3,1) + min(1,2) = 2; precision = 2/4, recall = 2/3
    // F1 = 2·(1/2)·(2/3) / (1/2 + 2/3) = (2/3)/(7/6) = 4/7
    expect(f1Score('fare fare fare zone', 'fare zone zone')).toBeCloseTo(4 / 7, 12);
  });
  it('articles and punctuation do not count', () => {
    // pred "The Blue Line, an express!" → [blue, line, express]; gold "blue line express" → same
    // common = 3; precision = recall = 1; F1 = 1
    expect(f1Score('The Blue Line, an express!', 'blue line express')).toBe(1);
    // pred "a ticket." → [ticket]; gold "The tickets" → [tickets]; common = 0 → 0
    expect(f1Score('a ticket.', 'The tickets')).toBe(0);
  });
  it('nothing in common, and two empty strings, give 0 (v1.1 returns 0 when num_same == 0)', () => {
    expect(f1Score('night bus', 'day pass')).toBe(0);
    expect(f1Score('', '')).toBe(0);
    expect(f1Score('the', 'a')).toBe(0);
  });
  it('partial overlap, both directions', () => {
    // pred "Day passes cost 5 dollars." → [day, passes, cost, 5, dollars]
    // gold "A day pass costs 5 dollars." → [day, pass, costs, 5, dollars]
    // common = {day, 5, dollars} = 3; P = 3/5, R = 3/5, F1 = 3/5
    expect(f1Score('Day passes cost 5 dollars.', 'A day pass costs 5 dollars.')).toBeCloseTo(0.6, 12);
  });
});

describe('words / contentWords (our support tokenizer)', () => {
  it('splits on Unicode punctuation and symbols, deletes apostrophes, keeps articles', () => {
    expect(words('The “N1” bus—don’t miss it: $2.50')).toEqual(['the', 'n1', 'bus', 'dont', 'miss', 'it', '2', '50']);
  });
  it('drops the stopwords of the `stopword` package English list and repeats', () => {
    // "the", "is", "at", "a" are in the list; "not" is not (negations stay content words).
    expect(contentWords('The bus is not at the stop, the bus is late')).toEqual(['bus', 'not', 'stop', 'late']);
  });
});
