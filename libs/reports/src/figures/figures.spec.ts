import { describe, expect, it } from 'vitest';
import { activityFigures, median } from './activity-figures.js';
import { alertEpisodes, coverageFigure, type RandomCheck } from './coverage-figures.js';
import { SettingsHistory } from './settings-history.js';

const t = (s: number) => new Date(Date.UTC(2026, 0, 1, 0, 0, s));

describe('coverageFigure', () => {
  it('gives the share and both intervals (Newcombe 1998, Table I: 81/263)', () => {
    const checks: RandomCheck[] = Array.from({ length: 263 }, (_, i) => ({
      at: t(i),
      category: 'ok',
      covered: i < 81,
    }));
    const f = coverageFigure(checks);
    expect(f.checks).toBe(263);
    expect(f.covered).toBe(81);
    // Newcombe (1998), Table I [reproduced]: Wilson 0.2553–0.3662, Clopper–Pearson 0.2527–0.3676; tolerance 5e-5.
    expect(Math.abs(f.wilson!.lower - 0.2553)).toBeLessThan(5e-5);
    expect(Math.abs(f.wilson!.upper - 0.3662)).toBeLessThan(5e-5);
    expect(Math.abs(f.clopperPearson!.lower - 0.2527)).toBeLessThan(5e-5);
    expect(Math.abs(f.clopperPearson!.upper - 0.3676)).toBeLessThan(5e-5);
  });

  it('states nothing for no checks', () => {
    expect(coverageFigure([])).toEqual({ checks: 0, covered: 0, coverage: null, wilson: null, clopperPearson: null });
  });
});

describe('alertEpisodes', () => {
  it('raises when the window falls short, clears when it recovers, and keeps only what touches the period', () => {
    // 30 good, 30 bad, 60 good checks; window 20, target 0.9.
    const pattern = [...Array(30).fill(true), ...Array(30).fill(false), ...Array(60).fill(true)] as boolean[];
    const all: RandomCheck[] = pattern.map((covered, i) => ({ at: t(i), category: 'ok', covered }));
    const whole = alertEpisodes(all, t(-1), () => 0.9, 20);
    expect(whole.episodes).toHaveLength(1);
    const e = whole.episodes[0];
    // Wilson upper bound (Newcombe's method 3, recomputed by hand): 16/20 → 0.9193, 15/20 → 0.8881; so the fifth miss (check 34) raises it.
    expect(e.raisedAt).toBe(t(34).toISOString());
    expect(e.coverage).toBeCloseTo(15 / 20, 12);
    expect(e.upper).toBeCloseTo(0.8881, 4);
    expect(e.upper).toBeLessThan(0.9);
    expect(e.clearedAt).not.toBeNull();
    expect(whole.raisedAtEnd).toBe(false);
    // A period that starts after the episode cleared has none.
    expect(alertEpisodes(all, t(110), () => 0.9, 20).episodes).toEqual([]);
    // A period that starts while it is raised keeps it.
    expect(alertEpisodes(all, t(50), () => 0.9, 20).episodes).toEqual([e]);
    expect(alertEpisodes(all.slice(0, 55), t(-1), () => 0.9, 20).raisedAtEnd).toBe(true);
  });

  it('uses the target in force at each check', () => {
    const all: RandomCheck[] = Array.from({ length: 40 }, (_, i) => ({
      at: t(i),
      category: 'ok',
      covered: i % 4 !== 0,
    }));
    expect(alertEpisodes(all, t(-1), () => 0.5, 20).episodes).toEqual([]);
    expect(
      alertEpisodes(all, t(-1), (at) => (at.getTime() >= t(30).getTime() ? 0.99 : 0.5), 20).episodes[0].raisedAt,
    ).toBe(t(30).toISOString());
  });
});

describe('SettingsHistory', () => {
  it('rebuilds the settings at any moment from the current ones and the recorded changes', () => {
    const h = new SettingsHistory({ coverageTarget: 0.95, calibration: 'marginal' }, [
      {
        at: t(10),
        actor: 'rowan',
        action: 'desk.update',
        before: { coverageTarget: 0.9 },
        after: { coverageTarget: 0.8 },
      },
      {
        at: t(20),
        actor: 'rowan',
        action: 'desk.update',
        before: { coverageTarget: 0.8, calibration: 'per-category' },
        after: { coverageTarget: 0.95, calibration: 'marginal' },
      },
    ]);
    expect(h.at(t(5))).toEqual({ coverageTarget: 0.9, calibration: 'per-category' });
    expect(h.at(t(10))).toEqual({ coverageTarget: 0.8, calibration: 'per-category' });
    expect(h.at(t(25))).toEqual({ coverageTarget: 0.95, calibration: 'marginal' });
    expect(h.between(t(10), t(20)).map((e) => e.at)).toEqual([t(20)]);
  });
});

describe('activityFigures', () => {
  it('lists reviewers by name with counts and median seconds', () => {
    const a = activityFigures([
      { reviewer: 'rowan', abstained: false, elapsedMs: 3000 },
      { reviewer: 'ash', abstained: true, elapsedMs: null },
      { reviewer: 'rowan', abstained: false, elapsedMs: 1000 },
      { reviewer: 'ash', abstained: false, elapsedMs: 8000 },
    ]);
    expect(a).toEqual({
      order: 'name',
      verdicts: 4,
      reviewers: [
        { name: 'ash', verdicts: 2, abstained: 1, medianSeconds: 8 },
        { name: 'rowan', verdicts: 2, abstained: 0, medianSeconds: 2 },
      ],
    });
    expect(median([5, 1, 3])).toBe(3);
    expect(() => median([])).toThrow(RangeError);
  });
});
