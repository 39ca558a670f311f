/** A version still on its way to publication. */
export interface VersionOnItsWay {
  version: number;
  state: 'training' | 'scoring';
}

/**
 * The versions a newly trained version stops (marks superseded) when it starts scoring.
 *
 * Stopping every older version still on its way starves a busy desk: when verdicts ask for a retrain more often than
 * scoring the pool takes, each new version stops the one about to publish, and none ever does. So the oldest version
 * already scoring keeps going (it is the nearest to publication) and the new one scores beside it; every other older
 * version stops. At most two versions score at once, and one of them always reaches publication. When a version
 * publishes, every older one still on its way stops (see PublishService), and a version older than the current one is
 * never published.
 */
export function versionsToSupersede(newVersion: number, onTheirWay: readonly VersionOnItsWay[]): number[] {
  const older = onTheirWay.filter((v) => v.version < newVersion);
  const scoring = older.filter((v) => v.state === 'scoring').map((v) => v.version);
  const keep = scoring.length > 0 ? Math.min(...scoring) : null;
  return older
    .map((v) => v.version)
    .filter((v) => v !== keep)
    .sort((a, b) => a - b);
}
