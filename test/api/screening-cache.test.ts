import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SCREENING_CACHE_BYTES, ScreeningCache } from '#models';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows, screeningDesk } from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const READS = ['/screening', '/prevalence?period=week', '/prevalence?period=day&by=imported'];

/**
 * The screening cache keeps the parsed per-item data of `/screening` and
 * `/prevalence` between calls. These tests compare every answer it gives
 * with the answer built afresh from the database (keeping turned off), after
 * each kind of change: the cache learns of changes only through the
 * database's change marker, so a change made through this process's API is
 * seen exactly as one made by another process would be.
 */
describe.each(DATABASE_KINDS)('the screening cache on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let rev: string;
  let deskId: number;
  let cache: ScreeningCache;
  const pool = syntheticPool(300, 41);

  /** The three answers as the service gives them now (from the cache when it holds them). */
  const answers = async () => {
    const out: unknown[] = [];
    for (const path of READS) {
      const r = await s.call(sup, 'GET', `/api/desks/${deskId}${path}`);
      expect(r.status).toBe(200);
      out.push(r.body);
    }
    return out;
  };
  /** The same answers built afresh from the database, nothing kept; the cache is empty afterwards. */
  const reference = async () => {
    cache.clear();
    cache.budgetBytes = 0;
    try {
      return await answers();
    } finally {
      cache.budgetBytes = SCREENING_CACHE_BYTES;
    }
  };
  /** Fills the cache and checks that a second round is served from it (no database read of the pool). */
  const warm = async () => {
    const first = await answers();
    const reads = { ...cache.reads };
    expect(await answers()).toEqual(first);
    expect(cache.reads).toEqual(reads);
    return first;
  };

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    rev = await s.user('rev0', 'reviewer');
    deskId = await screeningDesk(s, sup, 'cache', { watch: ['threat'], coverageTargets: { threat: 0.8 } });
    await importRows(
      s,
      sup,
      deskId,
      pool.map((p, i) => ({
        text: p.text,
        external_id: p.externalId,
        created_at: new Date(Date.UTC(2026, 0, 1) + i * 4 * 3600_000).toISOString(),
      })),
    );
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, deskId, [rev], labels, (a) => a.length >= 150);
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(180_000);
    await s.stopWorker();
    cache = s.api.get(ScreeningCache);
  }, 400_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('answers as a fresh build does, and sees a verdict, an undo, a settlement and an erasure at once', async () => {
    const before = await warm();
    expect(before).toEqual(await reference());
    const open0 = (before[0] as { open: number; modelVersion: number | null }).open;
    expect((before[0] as { modelVersion: number | null }).modelVersion).not.toBeNull();

    // A verdict decides an item: the pool is read again (the version's probabilities are not).
    await warm();
    let reads = { ...cache.reads };
    const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(l.status).toBe(201);
    const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: 'ok',
      clientId: 'cache-1',
    });
    expect(v.status).toBe(201);
    const afterVerdict = await answers();
    expect(cache.reads).toEqual({ versions: reads.versions, pools: reads.pools + 1 });
    expect((afterVerdict[0] as { open: number }).open).toBe(open0 - 1);
    expect(afterVerdict).toEqual(await reference());

    // Its undo reopens the item.
    await warm();
    reads = { ...cache.reads };
    expect((await s.call(rev, 'POST', `/api/verdicts/${v.body.verdict.id}/undo`)).status).toBe(201);
    const afterUndo = await answers();
    expect(cache.reads.pools).toBe(reads.pools + 1);
    expect((afterUndo[0] as { open: number }).open).toBe(open0);
    expect(afterUndo).toEqual(await reference());

    // A settlement relabels a random draw: the estimates' sample changes.
    const [random] = await s.db.query<{ item_id: number | string; name: string }>(
      null,
      `SELECT v.item_id, c.name FROM verdicts v JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.undone_at IS NULL ORDER BY v.id LIMIT 1`,
      [deskId],
    );
    await warm();
    reads = { ...cache.reads };
    const settled = await s.call(sup, 'POST', `/api/items/${Number(random.item_id)}/settle`, {
      category: random.name === 'threat' ? 'ok' : 'threat',
      reason: 'second look',
    });
    expect(settled.status).toBe(201);
    const afterSettle = await answers();
    expect(cache.reads.pools).toBe(reads.pools + 1);
    expect(afterSettle).not.toEqual(before);
    expect(afterSettle).toEqual(await reference());

    // An erasure takes open items out of the pool.
    await warm();
    reads = { ...cache.reads };
    const erased = await s.call(sup, 'POST', `/api/desks/${deskId}/erasures`, {
      externalIds: pool.slice(-3).map((p) => p.externalId),
      reason: 'request of the author',
    });
    expect(erased.status).toBe(201);
    const afterErasure = await answers();
    expect(cache.reads.pools).toBe(reads.pools + 1);
    expect(afterErasure).toEqual(await reference());
    const openNow = (afterErasure[0] as { open: number }).open;
    const [{ n }] = await s.db.query<{ n: number | string }>(
      null,
      `SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state <> 'decided'`,
      [deskId],
    );
    expect(openNow).toBe(Number(n));
  });

  it('applies a change of target, watch or confidence at once without reading the pool again', async () => {
    await warm();
    const reads = { ...cache.reads };
    for (const patch of [
      { coverageTargets: { threat: 0.95 } },
      { confidence: 0.9 },
      { watch: ['threat', 'harassment'] },
      { watch: ['threat'], confidence: null, coverageTargets: { threat: 0.8 } },
    ]) {
      expect((await s.call(sup, 'PATCH', `/api/desks/${deskId}`, patch)).status).toBe(200);
      const cached = await answers();
      const screening = cached[0] as { watch: string[]; perCategory: Record<string, { target: number }> };
      if (patch.watch) expect(screening.watch).toEqual(patch.watch);
      if (patch.coverageTargets) expect(screening.perCategory.threat.target).toBe(patch.coverageTargets.threat);
      expect(cache.reads).toEqual(reads);
      expect(cached).toEqual(await reference());
      await warm();
      reads.pools = cache.reads.pools;
      reads.versions = cache.reads.versions;
    }
  });
});
