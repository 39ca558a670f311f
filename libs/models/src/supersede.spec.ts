import { describe, expect, it } from 'vitest';
import { versionsToSupersede, type VersionOnItsWay } from './supersede.js';

describe('versionsToSupersede', () => {
  it('keeps the oldest version already scoring and stops every other older one', () => {
    const onTheirWay: VersionOnItsWay[] = [
      { version: 4, state: 'scoring' },
      { version: 5, state: 'scoring' },
      { version: 6, state: 'training' },
    ];
    expect(versionsToSupersede(7, onTheirWay)).toEqual([5, 6]);
  });

  it('stops older versions still training when none scores, and never a newer one', () => {
    expect(
      versionsToSupersede(5, [
        { version: 3, state: 'training' },
        { version: 4, state: 'training' },
        { version: 6, state: 'scoring' },
      ]),
    ).toEqual([3, 4]);
    expect(versionsToSupersede(2, [])).toEqual([]);
  });
});

/**
 * A desk under steady verdict traffic, one step a second: a retrain is asked for every `every` seconds, training takes
 * `train` seconds and scoring the pool `score` seconds, with workers enough for every job. Returns the times versions
 * were published and their numbers, under the given rule for what a newly trained version stops.
 */
function simulate(
  rule: (v: number, onTheirWay: VersionOnItsWay[]) => number[],
  { every, train, score, seconds }: { every: number; train: number; score: number; seconds: number },
) {
  const versions: Array<{ version: number; state: string; scoringFrom: number }> = [];
  const published: Array<{ at: number; version: number }> = [];
  let current = 0;
  for (let t = 0; t < seconds; t++) {
    // Scoring that finishes now: publish, unless a newer version is current already.
    for (const v of versions) {
      if (v.state !== 'scoring' || t < v.scoringFrom + score) continue;
      if (v.version < current) {
        v.state = 'superseded';
        continue;
      }
      v.state = 'published';
      current = v.version;
      published.push({ at: t, version: v.version });
      for (const o of versions)
        if (o.version < v.version && (o.state === 'training' || o.state === 'scoring')) o.state = 'superseded';
    }
    // Training that finishes now: the version starts scoring and stops what the rule says.
    for (const v of versions) {
      if (v.state !== 'training' || t < v.scoringFrom) continue;
      const onTheirWay = versions
        .filter((o) => o.state === 'training' || o.state === 'scoring')
        .filter((o) => o !== v)
        .map((o) => ({ version: o.version, state: o.state as VersionOnItsWay['state'] }));
      const stop = new Set(rule(v.version, onTheirWay));
      for (const o of versions) if (stop.has(o.version)) o.state = 'superseded';
      v.state = 'scoring';
    }
    if (t % every === 0) versions.push({ version: versions.length + 1, state: 'training', scoringFrom: t + train });
  }
  return published;
}

describe('a desk under steady verdict traffic (simulated)', () => {
  // Scoring the pool takes longer than the time between retrains, as on a large desk with verdicts arriving fast.
  const load = { every: 2, train: 1, score: 5, seconds: 120 };
  const stopEveryOlder = (v: number, onTheirWay: VersionOnItsWay[]) =>
    onTheirWay.filter((o) => o.version < v).map((o) => o.version);

  it('publishes nothing when each new version stops every older one', () => {
    expect(simulate(stopEveryOlder, load)).toEqual([]);
  });

  it('publishes steadily, in increasing order, when the oldest version scoring keeps going', () => {
    const published = simulate(versionsToSupersede, load);
    // One publication every scoring time or so: at least one per score + every seconds after the first.
    expect(published.length).toBeGreaterThanOrEqual(Math.floor(load.seconds / (load.score + load.every)) - 1);
    for (let i = 1; i < published.length; i++) {
      expect(published[i].version).toBeGreaterThan(published[i - 1].version);
      expect(published[i].at - published[i - 1].at).toBeLessThanOrEqual(load.score + load.every + load.train);
    }
    // The published version is never far behind the newest asked for.
    const last = published[published.length - 1];
    expect(last.version).toBeGreaterThanOrEqual(Math.floor(last.at / load.every) - 4);
  });

  it('changes nothing when scoring is quicker than the traffic: every version publishes', () => {
    const quiet = { every: 10, train: 1, score: 3, seconds: 100 };
    expect(simulate(versionsToSupersede, quiet).map((p) => p.version)).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
    expect(simulate(stopEveryOlder, quiet).map((p) => p.version)).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]);
  });
});
