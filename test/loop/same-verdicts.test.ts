import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { TrainingService } from '#models';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

describe.each(DATABASE_KINDS)('a retrain with nothing new to learn on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;

  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 200, verdicts: 60 });
  }, 240_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  const versions = async () =>
    Number(
      (
        await s.db.queryOne<{ n: DbInt }>(null, 'SELECT COUNT(*) AS n FROM model_versions WHERE desk_id = $1', [
          desk.deskId,
        ])
      )?.n,
    );

  it('publishes no new version on the same verdicts, says so, and learns again once a verdict arrives', async () => {
    const current = (await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number;
    const row = await s.db.queryOne<{ w: DbInt }>(
      null,
      'SELECT verdict_watermark AS w FROM model_versions WHERE desk_id = $1 AND version = $2',
      [desk.deskId, current],
    );
    const before = await versions();
    // The job the scheduler would queue next (its key is the newest version's watermark), run by hand.
    const training = s.worker!.get(TrainingService);
    const answer = await training.run({ deskId: desk.deskId, base: Number(row?.w) });
    expect(answer.version).toBeNull();
    expect(answer.reason).toMatch(
      new RegExp(`^no new version: version ${current} was trained and calibrated on the same verdicts`),
    );
    expect(await versions()).toBe(before);

    await s.call(desk.sup, 'PATCH', `/api/desks/${desk.deskId}`, { retrainEvery: 1, retrainAfterSeconds: 1 });
    // One more first-draw verdict is something new: a version follows.
    const l = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/leases`);
    expect(l.status).toBe(201);
    const v = await s.call(desk.rev, 'POST', `/api/desks/${desk.deskId}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: desk.labels.get(l.body.item.externalId),
      clientId: 'one-more',
    });
    expect(v.status).toBe(201);
    await eventually(
      async () =>
        ((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}`)).body.currentModelVersion as number) > current ||
        undefined,
      120_000,
      'a new version after a new verdict',
    );
  }, 240_000);
});
