import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DbInt } from '#database';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

/**
 * Labelled archives: an import names a label column; labelled rows become decided items with a verdict by the
 * system account `archive`. Archive labels train and never calibrate; labels stated to be a uniform sample of the
 * same stream (`labelDraw=random`) calibrate. Read from the model versions' metadata.
 */
describe.each(DATABASE_KINDS)('labelled archives on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let admin = '';
  let deskId = 0;
  // Seed fixed before looking at any result.
  const pool = syntheticPool(200, 15);

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('arc-sup', 'supervisor');
    admin = await s.user('arc-admin', 'admin');
    const r = await s.call(sup, 'POST', '/api/desks', {
      name: 'Mossbank archive',
      categories: ['threat', 'harassment', 'ok'],
      retrainAfterSeconds: 1,
    });
    expect(r.status).toBe(201);
    deskId = r.body.id;
    await s.enrol(deskId);
  }, 60_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  const ndjson = (rows: Array<Record<string, unknown>>) => rows.map((r) => JSON.stringify(r)).join('\n');
  const waitImport = (importId: string) =>
    eventually(
      async () => {
        const x = await s.call(sup, 'GET', `/api/imports/${importId}`);
        return x.body.state === 'done' || x.body.state === 'failed' ? x.body : undefined;
      },
      60_000,
      `import ${importId}`,
    );
  const count = async (sql: string, params: unknown[]) =>
    Number((await s.db.queryOne<{ n: DbInt }>(null, sql, params))?.n);
  const waitVersion = (version: number) =>
    eventually(
      async () => {
        const v = await s.call(sup, 'GET', `/api/desks/${deskId}/models/${version}`);
        return v.status === 200 && v.body.state === 'published' ? v.body : undefined;
      },
      120_000,
      `version ${version}`,
    );

  it('turns archive labels into decided items that train and never calibrate, and schedules a retrain', async () => {
    // Rows 1-80 carry their label, rows 81-120 none (they stay open), under a column named `label`.
    const rows = pool.slice(0, 120).map((p, i) => ({
      external_id: p.externalId,
      text: p.text,
      ...(i < 80 ? { label: p.label } : { label: '' }),
      board: 'general',
    }));
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports?labelField=label`, ndjson(rows), {
      'content-type': 'application/x-ndjson',
    });
    expect(r.status).toBe(202);
    const done = await waitImport(r.body.importId);
    expect(done).toMatchObject({ state: 'done', imported: 120, rejected: 0 });
    expect(done.labels).toEqual({ field: 'label', draw: 'archive', labelled: 80, uniformSample: null });
    const archived = await s.db.query<{ state: string; meta: string; reviewer: string; draw: string; cat: string }>(
      null,
      `SELECT i.state, i.meta, u.name AS reviewer, v.draw, c.name AS cat FROM items i
       JOIN verdicts v ON v.item_id = i.id JOIN users u ON u.id = v.reviewer_id JOIN categories c ON c.id = v.category_id
       WHERE i.desk_id = $1 ORDER BY i.id`,
      [deskId],
    );
    expect(archived).toHaveLength(80);
    expect(new Set(archived.map((a) => `${a.state} ${a.reviewer} ${a.draw}`))).toEqual(
      new Set(['decided archive archive']),
    );
    // The label is the verdict's; the item keeps its other metadata.
    expect(JSON.parse(archived[0].meta)).toEqual({ board: 'general' });
    expect(archived.map((a) => a.cat)).toEqual(pool.slice(0, 80).map((p) => p.label));
    expect(await count(`SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state = 'open'`, [deskId])).toBe(40);
    expect(
      await count(
        `SELECT COUNT(*) AS n FROM audit_events WHERE desk_id = $1 AND action = 'verdict.create' AND actor_name = 'archive'`,
        [deskId],
      ),
    ).toBe(80);

    // The import asked for a retrain: the first version trains on the 80 archive labels and calibrates on none.
    const v1 = await waitVersion(1);
    expect(v1.training.draws).toEqual({ archive: 80 });
    expect(Object.values(v1.training.counts).reduce((a: number, b) => a + (b as number), 0)).toBe(80);
    expect(v1.calibration.draws).toEqual({});
    expect(v1.calibration.items).toEqual([]);

    // The trail shows the account and the draw; the archive account is nobody's reviewer.
    const trail = await s.call(sup, 'GET', `/api/desks/${deskId}/trail.ndjson`);
    const lines = String(trail.body)
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as { reviewer: string; draw: string });
    expect(lines).toHaveLength(80);
    expect(new Set(lines.map((l) => `${l.reviewer}/${l.draw}`))).toEqual(new Set(['archive/archive']));
    const progress = await s.call(sup, 'GET', `/api/desks/${deskId}/progress`);
    expect(progress.body.verdicts.byDraw.archive).toBe(80);
    expect(progress.body.reviewers).toEqual([]);
    expect(progress.body.reviewersActiveLastHour).toBe(0);
    const agreement = await s.call(sup, 'GET', `/api/desks/${deskId}/agreement`);
    expect(agreement.body.reviewers).toBe(0);
    const users = await s.call(admin, 'GET', '/api/users');
    expect(users.status).toBe(200);
    expect(users.body.users.map((u: { name: string }) => u.name)).not.toContain('archive');
  }, 200_000);

  it('calibrates on an archive stated to be a uniform sample, and records who stated it', async () => {
    const rows = pool.slice(120, 180).map((p) => ({ external_id: p.externalId, text: p.text, cat: p.label }));
    const form = new FormData();
    form.append('labelField', 'cat');
    form.append('labelDraw', 'random');
    form.append('uniformSample', 'true');
    form.append('file', new Blob([ndjson(rows)], { type: 'application/x-ndjson' }), 'sample.ndjson');
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, form);
    expect(r.status).toBe(202);
    const done = await waitImport(r.body.importId);
    expect(done).toMatchObject({ state: 'done', imported: 60, rejected: 0 });
    expect(done.labels).toMatchObject({ field: 'cat', draw: 'random', labelled: 60 });
    expect(done.labels.uniformSample.statedBy).toBe('arc-sup');
    expect(
      await count(
        `SELECT COUNT(*) AS n FROM audit_events WHERE desk_id = $1 AND action = 'import.uniform-sample' AND entity_id = $2`,
        [deskId, r.body.importId],
      ),
    ).toBe(1);
    const v2 = await waitVersion(2);
    expect(v2.training.draws).toEqual({ archive: 80 });
    expect(v2.calibration.draws).toEqual({ random: 60 });
    expect(v2.calibration.items).toHaveLength(60);
  }, 200_000);

  it('refuses random labels without the statement, an unknown or misused label column, before anything is written', async () => {
    const before = await count('SELECT COUNT(*) AS n FROM items WHERE desk_id = $1', [deskId]);
    const body = ndjson([{ text: 'A fresh post about the pond', label: 'ok' }]);
    const nd = { 'content-type': 'application/x-ndjson' };
    const noStatement = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports?labelField=label&labelDraw=random`,
      body,
      nd,
    );
    expect(noStatement.status).toBe(400);
    expect(noStatement.body.message).toMatch(/labelDraw=random needs uniformSample=true/);
    const badDraw = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports?labelField=label&labelDraw=sample`,
      body,
      nd,
    );
    expect(badDraw.status).toBe(400);
    expect(badDraw.body.message).toMatch(/labelDraw must be archive or random/);
    const text = await s.call(sup, 'POST', `/api/desks/${deskId}/imports?labelField=text`, body, nd);
    expect(text.status).toBe(400);
    expect(text.body.message).toMatch(/labelField 'text' is an item field/);
    const unknown = await s.call(sup, 'POST', `/api/desks/${deskId}/imports?labelField=verdict_label`, body, nd);
    expect(unknown.status).toBe(400);
    expect(unknown.body.message).toMatch(/no row of the file has a key 'verdict_label'.*'label'/);
    const csv = await s.call(sup, 'POST', `/api/desks/${deskId}/imports?labelField=Label`, 'text,label\nhello,ok\n', {
      'content-type': 'text/csv',
    });
    expect(csv.status).toBe(400);
    expect(csv.body.message).toMatch(/no row of the file has a column 'Label'/);
    expect(await count('SELECT COUNT(*) AS n FROM items WHERE desk_id = $1', [deskId])).toBe(before);
  });

  it('rejects rows whose label is not a category, with their row numbers, and writes nothing of them', async () => {
    const before = await count('SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1', [deskId]);
    const csv =
      'external_id,text,label\n' +
      'x1,A neighbour left the gate open again,ok\n' +
      'x2,The market moves to the square this weekend,menace\n' +
      'x3,Nobody asked for your opinion on the hedges,\n' +
      'x4,See you at the library meeting,Ok\n';
    const r = await s.call(sup, 'POST', `/api/desks/${deskId}/imports?labelField=label`, csv, {
      'content-type': 'text/csv',
    });
    expect(r.status).toBe(202);
    const done = await waitImport(r.body.importId);
    expect(done).toMatchObject({ state: 'done', rowsRead: 4, imported: 2, rejected: 2 });
    expect(done.labels.labelled).toBe(1);
    expect(done.errors).toEqual([
      {
        row: 3,
        reason: expect.stringMatching(/"menace", which is not a category of this desk \(threat, harassment, ok\)/),
      },
      { row: 5, reason: expect.stringMatching(/"Ok", which is not a category/) },
    ]);
    const items = await s.db.query<{ external_id: string; state: string }>(
      null,
      `SELECT external_id, state FROM items WHERE import_id = $1 ORDER BY external_id`,
      [r.body.importId],
    );
    expect(items).toEqual([
      { external_id: 'x1', state: 'decided' },
      { external_id: 'x3', state: 'open' },
    ]);
    expect(await count('SELECT COUNT(*) AS n FROM verdicts WHERE desk_id = $1', [deskId])).toBe(before + 1);
  });
});
