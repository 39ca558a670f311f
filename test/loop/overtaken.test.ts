import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { TrainingService } from '#models';
import { JobQueueService, QUEUES } from '#queues';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

/*
 * Under steady verdict traffic a desk asks for retrains faster than a large pool is scored. If each new version stopped
 * every older one still scoring, none would ever publish. Here the job queues are paused, so scoring waits while three
 * versions are trained one after another, as under that traffic; then the queues run again.
 */
describe.each(DATABASE_KINDS)('versions overtaken while they score, on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  let n = 0;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 200, verdicts: 60 });
    expect((await s.call(desk.sup, 'PATCH', `/api/desks/${desk.deskId}`, { secondOpinionShare: 0 })).status).toBe(200);
  }, 240_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  const state = async (version: number) =>
    (
      await s.db.queryOne<{ state: string }>(
        null,
        'SELECT state FROM model_versions WHERE desk_id = $1 AND version = $2',
        [desk.deskId, version],
      )
    )?.state;
  /** Ten first-draw verdicts (second opinions due come first and teach nothing), then a retrain run at once. */
  const trainAfterVerdicts = async (training: TrainingService) => {
    for (let firsts = 0; firsts < 10;) {
      const l = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/leases`);
      expect(l.status).toBe(201);
      const v = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
        leaseId: l.body.lease.id,
        itemId: l.body.item.id,
        category: desk.labels.get(l.body.item.externalId),
        clientId: `overtaken-${n++}`,
      });
      expect(v.status).toBe(201);
      const lease = await s.db.queryOne<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
        l.body.lease.id,
      ]);
      if (lease?.draw !== 'second-opinion') firsts++;
    }
    const wm = await s.db.queryOne<{ w: DbInt }>(null, 'SELECT MAX(id) AS w FROM verdicts WHERE desk_id = $1', [
      desk.deskId,
    ]);
    const trained = await training.run({ deskId: desk.deskId, base: Number(wm?.w) });
    expect(trained.version, trained.reason).not.toBeNull();
    return trained.version!;
  };

  it('keeps the oldest version scoring while newer ones train, and publishes only in increasing order', async () => {
    const jobs = s.api.get(JobQueueService);
    const queues = Object.values(QUEUES).map((q) => jobs.queue(q));
    const current = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    for (const q of queues) await q.pause();
    try {
      const training = s.worker!.get(TrainingService);
      const a = await trainAfterVerdicts(training);
      expect(await state(a)).toBe('scoring');
      const b = await trainAfterVerdicts(training);
      // The oldest version scoring keeps going beside the new one.
      expect([await state(a), await state(b)]).toEqual(['scoring', 'scoring']);
      const c = await trainAfterVerdicts(training);
      // A third stops the one in the middle, never the oldest.
      expect([await state(a), await state(b), await state(c)]).toEqual(['scoring', 'superseded', 'scoring']);
      expect((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion).toBe(current);
    } finally {
      for (const q of queues) await q.resume();
    }
    await eventually(
      async () =>
        ((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number) >= current + 3
          ? true
          : undefined,
      120_000,
      'the newest version current',
    );
    await s.waitForQueuesIdle(120_000, { ignoreDelayed: true });
    // Whichever finished first, the published versions follow one another in increasing order.
    const rows = await s.db.query<{ version: DbInt; state: string; published_at: unknown }>(
      null,
      `SELECT version, state, published_at FROM model_versions WHERE desk_id = $1 AND version > $2 ORDER BY version`,
      [desk.deskId, current],
    );
    expect(rows.find((r) => Number(r.version) === current + 2)?.state).toBe('superseded');
    const published = rows
      .filter((r) => r.state === 'published')
      .map((r) => ({ version: Number(r.version), at: s.db.parseTime(r.published_at as never)!.getTime() }))
      .sort((x, y) => x.at - y.at || x.version - y.version);
    expect(published.map((p) => p.version)).toEqual([...published.map((p) => p.version)].sort((x, y) => x - y));
    expect(published.map((p) => p.version)).toContain(current + 3);
    // No version older than the current one is left on its way.
    expect(rows.filter((r) => r.state === 'training' || r.state === 'scoring')).toEqual([]);
  }, 240_000);
});
