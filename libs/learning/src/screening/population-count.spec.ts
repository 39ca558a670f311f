import { describe, expect, it } from 'vitest';
import { ConformalCalibration } from '../conformal/conformal-calibration.js';
import { predictionSetRule } from '../conformal/prediction-set.js';
import { clopperPearsonInterval } from '../intervals/binomial-intervals.js';
import { ESTIMATION_SHARE, inEstimationFold } from './estimation-fold.js';
import { estimatePopulationCount, PPI_MIN_EVENTS, PPI_MIN_LABELLED } from './population-count.js';
import { summarizeScores } from './prediction-powered.js';
import { estimatePrevalence } from './prevalence.js';

const pile = (scores: number[], unscored = 0) => ({ scored: summarizeScores(scores), unscored });

describe('estimatePopulationCount', () => {
  it('says so when no labelled item fell in the population, and bounds the count by its size', () => {
    const e = estimatePopulationCount([], [], pile([0.1, 0.2, 0.05]));
    expect(e).toMatchObject({ estimate: null, lower: 0, upper: 3, method: 'none', labelled: 0, events: 0 });
  });

  it('answers exactly 0 for an empty population (every item flagged)', () => {
    const e = estimatePopulationCount([1, 0], [0.6, 0.1], pile([]));
    expect(e).toMatchObject({ estimate: 0, lower: 0, upper: 0, method: 'exact', population: 0 });
  });

  it('falls back to Clopper–Pearson with few events, widened by the binomial spread of the population', () => {
    // 0 events among 40 labelled: the share's 97.5 % Clopper–Pearson upper bound is 1 − 0.0125^(1/40).
    const labels = new Array<number>(40).fill(0);
    const scores = new Array<number>(40).fill(0.02);
    const small = estimatePopulationCount(labels, scores, pile(new Array<number>(100).fill(0.02)));
    expect(small.method).toBe('clopper-pearson');
    expect(small.estimate).toBe(0);
    expect(small.lower).toBe(0);
    const share = clopperPearsonInterval(0, 40, 0.975).upper;
    expect(Math.abs(share - (1 - 0.0125 ** (1 / 40)))).toBeLessThan(1e-9);
    // The upper bound is a count the pile reaches with probability ≤ 1.25 % at that share: above 100 · share.
    expect(small.upper).toBeGreaterThan(100 * share);
    expect(Number.isInteger(small.upper)).toBe(true);
    // On a pile far larger than the sample the spread hardly matters: close to N · share.
    const large = estimatePopulationCount(labels, scores, pile([], 1_000_000));
    expect(Math.abs(large.upper / 1_000_000 - share)).toBeLessThan(0.001);
  });

  it('uses PPI++ with enough labelled items and events, clipped to [0, N]', () => {
    const labels = Array.from({ length: 60 }, (_, i) => (i % 3 === 0 ? 1 : 0));
    const scores = labels.map((y, i) => (y ? 0.6 : 0.2) + (i % 5) * 0.01);
    const e = estimatePopulationCount(labels, scores, pile(new Array<number>(500).fill(0.3)));
    expect(e.method).toBe('ppi++');
    expect(e.lambda).not.toBeNull();
    expect(e.lower).toBeGreaterThanOrEqual(0);
    expect(e.upper).toBeLessThanOrEqual(500);
    expect(e.estimate!).toBeGreaterThan(e.lower);
    expect(e.estimate!).toBeLessThan(e.upper);
    // The rule's edges: one event short of PPI_MIN_EVENTS, or too few labelled, gives Clopper–Pearson.
    const nine = Array.from({ length: 60 }, (_, i) => (i < PPI_MIN_EVENTS - 1 ? 1 : 0));
    expect(estimatePopulationCount(nine, nine, pile([0.1])).method).toBe('clopper-pearson');
    const few = Array.from({ length: PPI_MIN_LABELLED - 1 }, (_, i) => (i % 2 ? 1 : 0));
    expect(estimatePopulationCount(few, few, pile([0.1])).method).toBe('clopper-pearson');
    expect(() => estimatePopulationCount([2], [0.1], pile([0.1]))).toThrow(/0 or 1/);
  });
});

describe('a watched category with too few calibration verdicts (k > n)', () => {
  it('flags every item, so nothing is cleared and the misses are exactly 0', () => {
    // Two calibration items of category 0 at α = 0.05: k = ⌈3 · 0.95⌉ = 3 > 2, q̂ = +∞.
    const calibration = ConformalCalibration.fromScores(
      ['watched', 'other'],
      [
        [0.9, 0.1],
        [0.7, 0.3],
        [0.2, 0.8],
      ],
      [0, 0, 1],
    );
    const rule = predictionSetRule(calibration, { alpha: [0.05, 0.1], score: 'lac', mode: 'per-category' });
    const pool = [
      [0.01, 0.99],
      [0.5, 0.5],
    ];
    expect(pool.every((p) => rule(p).categories.includes(0))).toBe(true);
    expect(rule(pool[0]).needMore).toBe(17);
    expect(estimatePopulationCount([], [], pile([])).method).toBe('exact');
  });
});

describe('estimation fold', () => {
  it('holds out about a quarter of the items, the same ones every time', () => {
    const ids = Array.from({ length: 20_000 }, (_, i) => i + 1);
    const share = ids.filter(inEstimationFold).length / ids.length;
    // Binomial sd √(0.25 · 0.75 / 20 000) ≈ 0.003: within 0.012 (4 sd).
    expect(Math.abs(share - ESTIMATION_SHARE)).toBeLessThan(0.012);
    expect(ids.slice(0, 50).map(inEstimationFold)).toEqual(ids.slice(0, 50).map(inEstimationFold));
    expect(() => inEstimationFold(1.5)).toThrow(/itemId/);
  });
});

describe('estimatePrevalence', () => {
  it('adds the decided items with their labels to the estimate over the others', () => {
    const random = Array.from({ length: 40 }, (_, i) => (i < 12 ? 1 : 0));
    const e = estimatePrevalence({
      decided: 100,
      decidedInCategory: 30,
      randomLabels: random,
      randomScores: random.map((y) => (y ? 0.7 : 0.1)),
      unlabelled: pile(new Array<number>(860).fill(0.25)),
    });
    expect(e.items).toBe(1000);
    expect(e.randomVerdicts).toBe(40);
    expect(e.method).toBe('ppi++');
    // Known: 30 + 12; the 860 others hold between 0 and 860.
    expect(e.lower).toBeGreaterThanOrEqual(42 / 1000);
    expect(e.upper).toBeLessThanOrEqual(902 / 1000);
    expect(e.share!).toBeGreaterThan(e.lower);
  });

  it('has no share without random verdicts, but bounds it by what is known', () => {
    const e = estimatePrevalence({
      decided: 10,
      decidedInCategory: 4,
      randomLabels: [],
      randomScores: [],
      unlabelled: pile([0.5, 0.5], 8),
    });
    expect(e).toMatchObject({ share: null, lower: 0.2, upper: 0.7, method: 'none', items: 20, randomVerdicts: 0 });
  });

  it('is exact when every item of the period is decided', () => {
    const e = estimatePrevalence({
      decided: 3,
      decidedInCategory: 1,
      randomLabels: [1, 0],
      randomScores: [0.9, 0.2],
      unlabelled: pile([]),
    });
    expect(e).toMatchObject({ share: 0.4, lower: 0.4, upper: 0.4, method: 'exact', items: 5 });
    expect(() =>
      estimatePrevalence({
        ...e,
        decided: 1,
        decidedInCategory: 2,
        randomLabels: [],
        randomScores: [],
        unlabelled: pile([]),
      }),
    ).toThrow(/decidedInCategory/);
  });
});
