import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows } from '../support/labelled-desk.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const CATEGORIES = ['threat', 'harassment', 'ok'];
/** The new desk: the source's categories in another order, and one the source never had. */
const NEW_CATEGORIES = ['ok', 'threat', 'harassment', 'doxxing'];

describe.each(DATABASE_KINDS)('a desk started from another desk’s model on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let aud: string;
  let rev: string;
  let outsider: string;
  let source: number;
  let bare: number;
  let sourceVersion: number;

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    aud = await s.user('aud', 'auditor');
    rev = await s.user('rev', 'reviewer');
    outsider = await s.user('outsider', 'supervisor');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'source',
      categories: CATEGORIES,
      seedTerms: { threat: ['hurt'], harassment: ['idiot'] },
      secondOpinionShare: 0,
      retrainEvery: 30,
      retrainAfterSeconds: 1,
    });
    expect(d.status).toBe(201);
    source = d.body.id;
    await s.enrol(source, ['aud', 'rev']);
    const pool = syntheticPool(200, 41);
    await importRows(
      s,
      sup,
      source,
      pool.map((p) => ({ text: p.text, external_id: p.externalId })),
    );
    const labels = new Map(pool.map((p) => [p.externalId, p.label as string]));
    await answerFromLabels(s, source, [rev], labels, (a) => a.length >= 60);
    await new Promise((r) => setTimeout(r, 1500));
    await s.waitForQueuesIdle(180_000);
    sourceVersion = (await s.call(sup, 'GET', `/api/desks/${source}`)).body.currentModelVersion as number;
    expect(sourceVersion).toBeGreaterThanOrEqual(1);
    const b = await s.call(sup, 'POST', '/api/desks', { name: 'no model yet', categories: CATEGORIES });
    bare = b.body.id;
  }, 400_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('gives the version’s classifier as a download to supervisors and auditors only', async () => {
    const r = await s.call(sup, 'GET', `/api/desks/${source}/models/${sourceVersion}/model.json`);
    expect(r.status).toBe(200);
    expect(r.headers.get('content-disposition')).toBe(
      `attachment; filename="desk-${source}-v${sourceVersion}.model.json"`,
    );
    expect(r.body.type).toBe('cribra.model-export');
    expect(r.body.version).toBe(1);
    expect(r.body.source).toMatchObject({ deskId: source, deskName: 'source', version: sourceVersion });
    expect(r.body.categories).toEqual(CATEGORIES);
    expect(r.body.featurizer).toEqual({ hashBits: 18, maxWordNgram: 2, charNgrams: [3, 5] });
    // Sparse: only the buckets the training rows used carry weights, far fewer than the 2^18 buckets.
    const { classifier } = r.body;
    expect(classifier.features.length).toBeGreaterThan(0);
    expect(classifier.features.length).toBeLessThan(2 ** 18 / 10);
    expect(classifier.weights).toHaveLength(classifier.trained.length);
    // No texts: no string in the file is longer than a category or desk name.
    const strings = JSON.stringify(r.body).match(/"(?:[^"\\]|\\.)*"/g) ?? [];
    expect(Math.max(...strings.map((x) => x.length))).toBeLessThan(40);
    expect((await s.call(aud, 'GET', `/api/desks/${source}/models/${sourceVersion}/model.json`)).status).toBe(200);
    expect((await s.call(rev, 'GET', `/api/desks/${source}/models/${sourceVersion}/model.json`)).status).toBe(403);
    expect((await s.call(outsider, 'GET', `/api/desks/${source}/models/${sourceVersion}/model.json`)).status).toBe(404);
    const missing = await s.call(sup, 'GET', `/api/desks/${source}/models/999/model.json`);
    expect(missing.status).toBe(404);
    expect(missing.body.message).toMatch(/no model version 999/);
  });

  it('refuses a bad startFrom with 400 or 404 and writes nothing', async () => {
    const create = (who: string, name: string, startFrom: unknown) =>
      s.call(who, 'POST', '/api/desks', { name, categories: NEW_CATEGORIES, startFrom });
    const unknownDesk = await create(sup, 'a', { deskId: 99999, version: 1 });
    expect(unknownDesk.status).toBe(404);
    expect(unknownDesk.body.message).toMatch(/no desk 99999/);
    const notMember = await create(outsider, 'b', { deskId: source, version: sourceVersion });
    expect(notMember.status).toBe(404);
    expect(notMember.body.message).toBe(unknownDesk.body.message.replace('99999', String(source)));
    const noVersion = await create(sup, 'c', { deskId: bare, version: 1 });
    expect(noVersion.status).toBe(400);
    expect(JSON.stringify(noVersion.body.message)).toMatch(/has no model version yet/);
    const unknownVersion = await create(sup, 'd', { deskId: source, version: sourceVersion + 50 });
    expect(unknownVersion.status).toBe(400);
    expect(JSON.stringify(unknownVersion.body.message)).toMatch(/no model version \d+ \(its newest published/);
    const shape = await create(sup, 'e', { deskId: 'x' });
    expect(shape.status).toBe(400);
    const fewShared = await s.call(sup, 'POST', '/api/desks', {
      name: 'f',
      categories: ['ok', 'doxxing'],
      startFrom: { deskId: source, version: sourceVersion },
    });
    expect(fewShared.status).toBe(400);
    expect(JSON.stringify(fewShared.body.message)).toMatch(/share fewer than two trained categories/);
    const names = (await s.call(sup, 'GET', '/api/desks')).body.desks.map((d: { name: string }) => d.name);
    for (const n of ['a', 'b', 'c', 'd', 'e', 'f']) expect(names).not.toContain(n);
  });

  it('serves the transferred model before any verdict, with every category in the sets, and names the source in its report', async () => {
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'started from source',
      categories: NEW_CATEGORIES,
      secondOpinionShare: 0,
      retrainAfterSeconds: 1,
      startFrom: { deskId: source, version: sourceVersion },
    });
    expect(d.status).toBe(201);
    expect(d.body.startedFrom).toEqual({
      deskId: source,
      deskName: 'source',
      version: sourceVersion,
      untrained: ['doxxing'],
      dropped: [],
    });
    const deskId = d.body.id as number;
    await s.enrol(deskId, ['rev', 'aud']);
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion === 1 ? true : undefined,
      60_000,
      'the transferred version published',
    );
    // The new pool arrives after the desk: it is scored under the transferred classifier (a version with the same
    // classifier, recalibrated on the desk's random verdicts, of which there are none yet).
    const pool = syntheticPool(120, 43);
    await importRows(
      s,
      sup,
      deskId,
      pool.map((p) => ({ text: p.text, external_id: p.externalId })),
    );
    await new Promise((r) => setTimeout(r, 1500));
    await s.waitForQueuesIdle(120_000);
    const desk = (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body;
    expect(desk.currentModelVersion).toBeGreaterThanOrEqual(2);
    const verdicts = await s.call(sup, 'GET', `/api/desks/${deskId}/verdicts`);
    expect(verdicts.body.verdicts).toHaveLength(0);
    const items = await s.call(aud, 'GET', `/api/desks/${deskId}/items?limit=500`);
    expect(items.body.items).toHaveLength(pool.length);
    const truth = new Map(pool.map((p) => [p.externalId, p.label as string]));
    let right = 0;
    for (const it of items.body.items as Array<{
      externalId: string;
      prediction: { probabilities: Record<string, number>; set: string[]; call: string };
    }>) {
      expect([...it.prediction.set].sort()).toEqual([...NEW_CATEGORIES].sort());
      expect(it.prediction.call).toBe('ambiguous');
      expect(it.prediction.probabilities.doxxing).toBe(0);
      const p = it.prediction.probabilities;
      const best = Object.keys(p).reduce((a, b) => (p[b] > p[a] ? b : a));
      if (best === truth.get(it.externalId)) right++;
    }
    // The source desk's model learned the same kind of posts: most of the new pool is predicted right before any
    // verdict (a uniform guess over three categories would get a third).
    expect(right / pool.length).toBeGreaterThan(0.6);
    const lease = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(lease.status).toBe(201);
    expect(lease.body.prediction.modelVersion).toBe(desk.currentModelVersion);
    expect([...lease.body.prediction.set].sort()).toEqual([...NEW_CATEGORIES].sort());
    const version = await s.call(aud, 'GET', `/api/desks/${deskId}/models/${desk.currentModelVersion}`);
    expect(version.body.calibrationCounts).toEqual({ ok: 0, threat: 0, harassment: 0, doxxing: 0 });
    const report = await eventually(
      async () => {
        const r = await s.call(aud, 'GET', `/api/desks/${deskId}/models/1/report.json`);
        return r.status === 200 ? r : undefined;
      },
      60_000,
      'the first version’s report',
    );
    expect(report.body.version.startedFrom).toEqual({
      deskId: source,
      deskName: 'source',
      version: sourceVersion,
      untrained: ['doxxing'],
    });
    const html = await s.call(aud, 'GET', `/api/desks/${deskId}/models/1/report.html`);
    expect(String(html.body)).toContain(`version ${sourceVersion} of desk source (id ${source})`);
    // The source's model file scores the same way here: it is that classifier.
    const file = await s.call(sup, 'GET', `/api/desks/${deskId}/models/1/model.json`);
    const original = await s.call(sup, 'GET', `/api/desks/${source}/models/${sourceVersion}/model.json`);
    expect(file.body.idf).toEqual(original.body.idf);
    expect(file.body.classifier.features).toEqual(original.body.classifier.features);
  });
});
