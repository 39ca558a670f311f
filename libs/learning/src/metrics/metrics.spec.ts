import { describe, expect, it } from 'vitest';
import { accuracy } from './accuracy.js';
import { brierScore } from './brier-score.js';
import { expectedCalibrationError, reliabilityBins, topLabelConfidence } from './calibration-error.js';
import { logLoss } from './log-loss.js';
import { macroF1 } from './macro-f1.js';

const TOL = 5e-5;

describe('quality metrics', () => {
  it('ECE matches the recomputed example', () => {
    // Guo et al. (2017), "On Calibration of Modern Neural Networks", ICML, eq. 3;
    // example recomputed, no published source: → 0.133333.
    const confidences = [0.9, 0.9, 0.9, 0.9, 0.6, 0.6];
    const correct = [1, 1, 1, 0, 1, 0];
    expect(Math.abs(expectedCalibrationError(confidences, correct, 10) - 0.133333)).toBeLessThan(TOL);
    const bins = reliabilityBins(confidences, correct, 10);
    // 0.9 closes the bin (0.8, 0.9]; 0.6 closes (0.5, 0.6].
    expect(bins[8]).toMatchObject({ count: 4, accuracy: 0.75 });
    expect(Math.abs(bins[8].meanConfidence - 0.9)).toBeLessThan(1e-12);
    expect(bins[5]).toMatchObject({ count: 2, accuracy: 0.5 });
    expect(bins.reduce((s, b) => s + b.count, 0)).toBe(6);
    expect(Number.isNaN(bins[0].accuracy)).toBe(true);
  });

  it('Brier matches the binary documentation example, doubled in the multi-class form', () => {
    // scikit-learn's brier_score_loss documentation [reproduced]: y = [0,1,1,0],
    // p = [0.1,0.9,0.8,0.3] → 0.0375. Multi-class form, Brier (1950) [memory]:
    // with two columns it is twice the binary score, 0.075.
    const p1 = [0.1, 0.9, 0.8, 0.3];
    const rows = p1.map((p) => [1 - p, p]);
    expect(Math.abs(brierScore(rows, [0, 1, 1, 0]) - 2 * 0.0375)).toBeLessThan(TOL);
    // Range 0–2: a confident wrong answer scores 2.
    expect(brierScore([[1, 0, 0]], [2])).toBe(2);
  });

  it('log loss matches the documentation example', () => {
    // scikit-learn's log_loss documentation example [memory; recomputed by hand:
    // −(ln .9 + ln .9 + ln .8 + ln .65)/4]: → 0.21616.
    const rows = [
      [0.1, 0.9],
      [0.9, 0.1],
      [0.8, 0.2],
      [0.35, 0.65],
    ];
    expect(Math.abs(logLoss(rows, [1, 0, 0, 1]) - 0.21616)).toBeLessThan(TOL);
    expect(Number.isFinite(logLoss([[1, 0]], [1]))).toBe(true);
  });

  it('accuracy and macro-F1 match the documentation example', () => {
    // scikit-learn's f1_score documentation example [memory; recomputed: class 0
    // F1 = 4/5, classes 1 and 2 F1 = 0] → macro 0.266667.
    const truth = [0, 1, 2, 0, 1, 2];
    const predicted = [0, 2, 1, 0, 0, 1];
    expect(Math.abs(macroF1(truth, predicted, 3) - 0.266667)).toBeLessThan(TOL);
    expect(Math.abs(accuracy(truth, predicted, 3) - 2 / 6)).toBeLessThan(1e-12);
    // A category absent from truth and predictions does not count.
    expect(macroF1([0, 1], [0, 1], 5)).toBe(1);
  });

  it('derives top-label confidence and rejects bad input', () => {
    expect(
      topLabelConfidence(
        [
          [0.2, 0.8],
          [0.6, 0.4],
        ],
        [1, 1],
      ),
    ).toEqual({ confidences: [0.8, 0.6], correct: [true, false] });
    expect(() => accuracy([0], [3], 3)).toThrow(/predicted\[0\]/);
    expect(() => brierScore([[0.5, 0.6]], [0])).toThrow(/sum to 1/);
    expect(() => expectedCalibrationError([1.5], [1])).toThrow(/confidences\[0\]/);
  });
});
