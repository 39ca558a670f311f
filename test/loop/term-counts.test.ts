import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { DataSource } from 'typeorm';
import { Database, openDatabase, type DbInt } from '#database';
import { ConformalCalibration, tfidf, trainLogisticModel, type IdfTable } from '#learning';
import { DeskFeaturesService, ModelStore, ScoringService } from '#models';
import { createTestDatabase, DATABASE_KINDS, type TestDatabase } from '../support/databases.js';
import { syntheticPool } from '../support/synthetic.js';

const POOL = 300;
/** Items imported "before term counts were kept": no cached row. */
const WITHOUT_COUNTS = 50;
const CATEGORIES = ['threat', 'harassment', 'ok'];
/** Cached counts and tokenising run the same arithmetic; allow only rounding noise. */
const TOLERANCE = 1e-12;

describe.each(DATABASE_KINDS)('scoring from cached term counts on %s', (kind) => {
  let tdb: TestDatabase;
  let ds: DataSource;
  let db: Database;
  let features: DeskFeaturesService;
  let scoring: ScoringService;
  let idf: IdfTable;
  let model: ReturnType<typeof trainLogisticModel>;
  const texts = new Map<number, string>();
  let ids: number[] = [];

  beforeAll(async () => {
    tdb = await createTestDatabase(kind);
    ds = await openDatabase(tdb.config);
    db = new Database(ds);
    features = new DeskFeaturesService(db);
    const store = new ModelStore(db, features);
    scoring = new ScoringService(db, store, features, async () => undefined);
    const now = db.time(new Date());
    await db.query(
      null,
      `INSERT INTO users (name, role, disabled, created_at) VALUES ('sam', 'supervisor', false, $1)`,
      [now],
    );
    await db.query(
      null,
      `INSERT INTO desks (name, seed_terms, coverage_target, calibration, random_share, lease_seconds, created_by, created_at, updated_at) VALUES ('d', '{}', 0.9, 'per-category', 0.2, 600, 1, $1, $1)`,
      [now],
    );
    for (const [i, c] of CATEGORIES.entries())
      await db.query(null, 'INSERT INTO categories (desk_id, name, position, created_at) VALUES (1, $1, $2, $3)', [
        c,
        i + 1,
        now,
      ]);
    const pool = syntheticPool(POOL, 5);
    for (const [i, p] of pool.entries()) {
      const [row] = await db.query<{ id: DbInt }>(
        null,
        `INSERT INTO items (desk_id, text, normalized_text, normalized_hash, meta, imported_at, state, seed_hits, priority, rand_key) VALUES (1, $1, $1, $2, '{}', $3, 'open', 0, 0, 0.5) RETURNING id`,
        [p.text, `h${i}`, now],
      );
      texts.set(Number(row.id), p.text);
    }
    ids = [...texts.keys()].sort((a, b) => a - b);
    await db.write((m) =>
      features.addItems(
        m,
        1,
        ids.slice(0, POOL - WITHOUT_COUNTS).map((id) => ({ id, text: texts.get(id)! })),
      ),
    );
    idf = await features.table(1);
    const f = features.featurizer(idf.hashBits);
    const labelled = pool.slice(0, 120);
    model = trainLogisticModel(
      labelled.map((p) => tfidf(f.counts(p.text), idf)),
      labelled.map((p) => p.label),
      { categories: CATEGORIES, hashBits: idf.hashBits },
    );
    const calib = pool.slice(120, 180);
    const calibration = ConformalCalibration.fromScores(
      CATEGORIES,
      calib.map((p) => model.predictProba(tfidf(f.counts(p.text), idf))),
      calib.map((p) => CATEGORIES.indexOf(p.label)),
    );
    for (const version of [1, 2]) {
      await db.query(
        null,
        `INSERT INTO model_versions (desk_id, version, state, job_key, verdict_watermark, training, calibration, model, timings, created_at) VALUES (1, $1, 'scoring', $2, 0, '{}', $3, $4, '{}', $5)`,
        [
          version,
          `k${version}`,
          JSON.stringify({ scores: calibration.toJSON() }),
          JSON.stringify({ classifier: model.toJSON(), idf: idf.toJSON(), featurizer: f.options }),
          now,
        ],
      );
    }
  });
  afterAll(async () => {
    await (ds as DataSource | undefined)?.destroy();
    await (tdb as TestDatabase | undefined)?.drop();
  });

  /** Probabilities of every item under `version`, beside those of tokenising its text (the reference). */
  async function compare(version: number) {
    const f = features.featurizer(idf.hashBits);
    const rows = await db.query<{ item_id: DbInt; probabilities: string }>(
      null,
      'SELECT item_id, probabilities FROM predictions WHERE model_version = $1 ORDER BY item_id',
      [version],
    );
    expect(rows.map((r) => Number(r.item_id))).toEqual(ids);
    let worst = 0;
    for (const r of rows) {
      const want = model.predictProba(tfidf(f.counts(texts.get(Number(r.item_id))!), idf));
      const got = JSON.parse(r.probabilities) as number[];
      for (let c = 0; c < CATEGORIES.length; c++) worst = Math.max(worst, Math.abs(got[c] - want[c]));
    }
    return worst;
  }

  it('keeps the hashed counts of imported items and fills in the missing ones while scoring', async () => {
    const [{ n }] = await db.query<{ n: number | string }>(null, 'SELECT COUNT(*) AS n FROM item_term_counts');
    expect(Number(n)).toBe(POOL - WITHOUT_COUNTS);
    const first = await scoring.run({ deskId: 1, version: 1, fromId: ids[0], toId: ids[150] });
    const rest = await scoring.run({ deskId: 1, version: 1, fromId: ids[150], toId: ids[POOL - 1] + 1 });
    expect(first).toEqual({ scored: 150, tokenised: 0 });
    expect(rest).toEqual({ scored: 150, tokenised: WITHOUT_COUNTS });
    expect(await compare(1)).toBeLessThanOrEqual(TOLERANCE);
    const [{ m }] = await db.query<{ m: number | string }>(null, 'SELECT COUNT(*) AS m FROM item_term_counts');
    expect(Number(m)).toBe(POOL);
    // A retried chunk writes nothing twice.
    expect(await scoring.run({ deskId: 1, version: 1, fromId: ids[0], toId: ids[150] })).toEqual({
      scored: 150,
      tokenised: 0,
    });
    const [{ p }] = await db.query<{ p: number | string }>(
      null,
      'SELECT COUNT(*) AS p FROM predictions WHERE model_version = 1',
    );
    expect(Number(p)).toBe(POOL);
  });

  it('tokenises items whose counts were made with other featuriser settings', async () => {
    // Counts of a different featuriser: wrong for this model, so they must not be used.
    await db.write((m) =>
      db.query(m, `UPDATE item_term_counts SET featurizer = 'h12w1c0', counts = $1 WHERE item_id <= $2`, [
        Buffer.from([1, 1, 0, 1]),
        ids[9],
      ]),
    );
    const r = await scoring.run({ deskId: 1, version: 2, fromId: ids[0], toId: ids[POOL - 1] + 1 });
    expect(r).toEqual({ scored: POOL, tokenised: 10 });
    expect(await compare(2)).toBeLessThanOrEqual(TOLERANCE);
  });

  it('refuses term counts of an unknown item and rows too short to hold counts', async () => {
    await expect(
      db.write((m) =>
        db.query(m, `INSERT INTO item_term_counts (item_id, featurizer, counts) VALUES (999999, 'h18w2c3-5', $1)`, [
          Buffer.from([1, 0]),
        ]),
      ),
    ).rejects.toThrow(/foreign key|FOREIGN KEY/i);
    await db.write((m) => db.query(m, 'DELETE FROM item_term_counts WHERE item_id = $1', [ids[0]]));
    await expect(
      db.write((m) =>
        db.query(m, `INSERT INTO item_term_counts (item_id, featurizer, counts) VALUES ($1, 'h18w2c3-5', $2)`, [
          ids[0],
          Buffer.from([1]),
        ]),
      ),
    ).rejects.toThrow(/ck_item_term_counts_bytes|CHECK/i);
  });
});
