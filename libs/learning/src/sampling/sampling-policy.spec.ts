import { describe, expect, it } from 'vitest';
import type { SparseVector } from '../features/sparse-vector.js';
import { createRng } from '../random/rng.js';
import { entropy } from '../uncertainty/uncertainty-scores.js';
import {
  avoidNearDuplicate,
  byPriority,
  drawKindOf,
  drawPlan,
  priorityOf,
  screenPriority,
  uniformPick,
} from './sampling-policy.js';

function vec(indices: number[], values: number[]): SparseVector {
  return { indices: Int32Array.from(indices), values: Float64Array.from(values) };
}

describe('drawKindOf', () => {
  const shares = { randomShare: 0.2, screenShare: 0.3 };
  const live = { hasModel: true, laneOpen: true };

  it('splits [0, 1) into the random share, the review lane and uncertainty', () => {
    expect(drawKindOf(0, shares, live)).toBe('random');
    expect(drawKindOf(0.1999, shares, live)).toBe('random');
    expect(drawKindOf(0.2, shares, live)).toBe('screen');
    expect(drawKindOf(0.4999, shares, live)).toBe('screen');
    expect(drawKindOf(0.5, shares, live)).toBe('uncertainty');
    expect(drawKindOf(0.9999, shares, live)).toBe('uncertainty');
  });

  it('serves the cold start before the first version and the lane only when it is open', () => {
    expect(drawKindOf(0.1, shares, { hasModel: false, laneOpen: false })).toBe('random');
    expect(drawKindOf(0.3, shares, { hasModel: false, laneOpen: false })).toBe('seed');
    expect(drawKindOf(0.9, shares, { hasModel: false, laneOpen: false })).toBe('seed');
    expect(drawKindOf(0.3, shares, { hasModel: true, laneOpen: false })).toBe('uncertainty');
  });

  it('gives each kind its share of uniform draws', () => {
    const rng = createRng(11);
    const counts = { random: 0, screen: 0, uncertainty: 0, seed: 0 };
    const n = 20_000;
    for (let t = 0; t < n; t++) counts[drawKindOf(rng.next(), shares, live)]++;
    // Binomial sd of a share near 0.3 over 20 000 draws ≈ 0.0032: allow 5 sd.
    expect(Math.abs(counts.random / n - 0.2)).toBeLessThan(0.016);
    expect(Math.abs(counts.screen / n - 0.3)).toBeLessThan(0.016);
    expect(Math.abs(counts.uncertainty / n - 0.5)).toBeLessThan(0.016);
    expect(counts.seed).toBe(0);
  });

  it('refuses shares outside [0, 1] or summing above 1, and u outside [0, 1)', () => {
    expect(() => drawKindOf(0.5, { randomShare: 1.2, screenShare: 0 }, live)).toThrow(/randomShare/);
    expect(() => drawKindOf(0.5, { randomShare: 0.6, screenShare: 0.6 }, live)).toThrow(/at most 1/);
    expect(() => drawKindOf(1, shares, live)).toThrow(/u must be/);
  });
});

describe('drawPlan', () => {
  it('falls back from the lane to uncertainty to a uniform draw, and keeps the cold start named seed', () => {
    expect(drawPlan('screen')).toEqual([
      { source: 'screen', records: 'screen' },
      { source: 'uncertainty', records: 'uncertainty' },
      { source: 'uniform', records: 'uncertainty' },
    ]);
    expect(drawPlan('uncertainty').map((s) => s.source)).toEqual(['uncertainty', 'uniform']);
    expect(drawPlan('random')).toEqual([{ source: 'uniform', records: 'random' }]);
    expect(drawPlan('seed')).toEqual([
      { source: 'seed', records: 'seed' },
      { source: 'uniform', records: 'seed' },
    ]);
    expect(drawPlan('seed', false)).toEqual([{ source: 'uniform', records: 'seed' }]);
  });
});

describe('priorityOf', () => {
  it('ranks by each strategy (Settles 2009, §3.1)', () => {
    const p = [0.6, 0.3, 0.1];
    expect(priorityOf(p, 'entropy', 1)).toBeCloseTo(entropy(p), 12);
    expect(priorityOf(p, 'margin', 1)).toBeCloseTo(1 - (0.6 - 0.3), 12);
    expect(priorityOf(p, 'least-confidence', 1)).toBeCloseTo(0.4, 12);
    // Set size first; entropy only breaks ties, so a larger set always outranks a smaller one.
    expect(priorityOf([0.34, 0.33, 0.33], 'set-size', 1)).toBeLessThan(priorityOf([0.98, 0.01, 0.01], 'set-size', 2));
    expect(priorityOf([0.5, 0.5, 0], 'set-size', 2)).toBeGreaterThan(priorityOf([0.9, 0.1, 0], 'set-size', 2));
    expect(() => priorityOf(p, 'greedy' as never, 1)).toThrow(/strategy/);
  });

  it('orders the most uncertain first, ties to the newest item', () => {
    const items = [
      { id: 1, priority: 0.5 },
      { id: 2, priority: 0.9 },
      { id: 3, priority: 0.5 },
    ];
    expect([...items].sort(byPriority).map((i) => i.id)).toEqual([2, 3, 1]);
  });
});

describe('screenPriority', () => {
  it('flags an item whose set holds a watched category, by its highest watched probability', () => {
    const p = [0.5, 0.3, 0.2];
    expect(screenPriority(p, [0, 1], [1, 2])).toBeCloseTo(0.3, 12);
    expect(screenPriority(p, [0], [1, 2])).toBeNull();
    expect(screenPriority(p, [0, 2], [2])).toBeCloseTo(0.2, 12);
  });
});

describe('avoidNearDuplicate', () => {
  const a = { id: 1, v: vec([1, 2], [0.6, 0.8]) };
  const aLike = { id: 2, v: vec([1, 2], [0.61, 0.79]) };
  const b = { id: 3, v: vec([7], [1]) };

  it('takes the first candidate that is not a near-duplicate (cosine ≥ 0.95) of the last one served', () => {
    // cos(a, aLike) ≈ 0.99996: skipped.
    expect(avoidNearDuplicate([aLike, b], (c) => c.v, a.v)?.id).toBe(3);
    expect(avoidNearDuplicate([b, aLike], (c) => c.v, a.v)?.id).toBe(3);
    expect(avoidNearDuplicate([aLike, b], (c) => c.v, null)?.id).toBe(2);
  });

  it('falls back to the first when all are near-duplicates, and is empty only without candidates', () => {
    expect(avoidNearDuplicate([aLike], (c) => c.v, a.v)?.id).toBe(2);
    expect(avoidNearDuplicate([aLike, a], (c) => c.v, a.v)?.id).toBe(2);
    expect(avoidNearDuplicate([], (c: typeof a) => c.v, a.v)).toBeUndefined();
    expect(() => avoidNearDuplicate([a], (c) => c.v, a.v, 0)).toThrow(/cosine/);
  });
});

describe('uniformPick', () => {
  const items = [
    { id: 10, randKey: 0.7 },
    { id: 11, randKey: 0.2 },
    { id: 12, randKey: 0.5 },
  ];

  it('takes the first key at or after r, wrapping around', () => {
    expect(uniformPick(items, 0.1)?.id).toBe(11);
    expect(uniformPick(items, 0.2)?.id).toBe(11);
    expect(uniformPick(items, 0.21)?.id).toBe(12);
    expect(uniformPick(items, 0.69)?.id).toBe(10);
    expect(uniformPick(items, 0.71)?.id).toBe(11);
    expect(uniformPick<{ id: number; randKey: number }>([], 0.5)).toBe(undefined);
  });

  it('draws each item with the chance of the gap before its key', () => {
    const rng = createRng(3);
    const counts = new Map<number, number>();
    const n = 20_000;
    for (let t = 0; t < n; t++) {
      const id = uniformPick(items, rng.next())!.id;
      counts.set(id, (counts.get(id) ?? 0) + 1);
    }
    // Gaps: (0.5, 0.7] → 10 (0.2), (0.7, 1) ∪ [0, 0.2] → 11 (0.5), (0.2, 0.5] → 12 (0.3); sd ≤ 0.0036, allow 5 sd.
    expect(Math.abs(counts.get(10)! / n - 0.2)).toBeLessThan(0.018);
    expect(Math.abs(counts.get(11)! / n - 0.5)).toBeLessThan(0.018);
    expect(Math.abs(counts.get(12)! / n - 0.3)).toBeLessThan(0.018);
  });
});
