import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity, type DbInt, type InsertColumn } from '#database';
import { predictionSet, uncertainty, type SparseVector } from '#learning';
import type { ScoreChunkPayload } from '#queues';
import { DeskFeaturesService } from './desk-features.service.js';
import { ModelStore, type LoadedModel } from './model-store.service.js';
import { priorityOf } from '#learning';
import { setOptionsOf } from './set-options.js';
import { decodeTermCounts, encodeTermCounts } from './term-counts.js';
import { PAUSE_HOOK, type PauseHook } from './training.service.js';

const PREDICTION_COLUMNS: InsertColumn[] = [
  { name: 'item_id', pgType: 'integer' },
  { name: 'model_version', pgType: 'integer' },
  { name: 'desk_id', pgType: 'integer' },
  { name: 'probabilities', pgType: 'text' },
  { name: 'uncertainty', pgType: 'double precision' },
  { name: 'priority', pgType: 'double precision' },
];

interface ChunkRow {
  id: DbInt;
  featurizer: string | null;
  counts: Uint8Array | null;
  /** Only when the cached counts are missing or were made with other featuriser settings. */
  text: string | null;
}

/**
 * Scores one chunk of a desk's open items under a new version and stores the
 * predictions. Each item's hashed term counts come from `item_term_counts`
 * (made at import), so scoring is tf-idf with the version's idf and one
 * sparse dot product per category; an item without counts for this
 * version's featuriser is tokenised, and its counts are filled in when none
 * were stored yet (items imported before counts were kept).
 */
@Injectable()
export class ScoringService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(ModelStore) private readonly store: ModelStore,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(PAUSE_HOOK) private readonly pause: PauseHook,
  ) {}

  async run(p: ScoreChunkPayload): Promise<{ scored: number; tokenised?: number; skipped?: string }> {
    const state = await this.db.queryOne<{ state: string }>(
      null,
      'SELECT state FROM model_versions WHERE desk_id = $1 AND version = $2',
      [p.deskId, p.version],
    );
    if (state?.state !== 'scoring') return { scored: 0, skipped: `version is ${state?.state ?? 'gone'}` };
    const model = await this.store.load(p.deskId, p.version);
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: p.deskId });
    if (!model || !desk) return { scored: 0, skipped: 'version or desk gone' };
    const items = await this.db.query<ChunkRow>(
      null,
      `SELECT i.id, t.featurizer, t.counts, CASE WHEN t.featurizer IS NULL OR t.featurizer <> $4 THEN i.text END AS text
       FROM items i LEFT JOIN item_term_counts t ON t.item_id = i.id
       WHERE i.desk_id = $1 AND i.id >= $2 AND i.id < $3 AND i.state <> 'decided' ORDER BY i.id`,
      [p.deskId, p.fromId, p.toId, model.featurizerKey],
    );
    await this.pause('scoring');
    const { rows, backfill, tokenised } = this.predict(desk, model, p.version, items);
    // Retried chunks skip rows already written.
    await this.db.write(async (m) => {
      await this.db.insertRows(m, 'predictions', PREDICTION_COLUMNS, rows);
      await this.features.storeCounts(m, backfill);
    });
    return { scored: rows.length, tokenised };
  }

  /**
   * Scores the desk's open items that its current version has not scored (imported after that version scored the
   * pool, or while a newer one was scoring), under that version, and gives them their priority: a new import is
   * served by the model and screened at once, without waiting for a retrain that the same verdicts would not bring.
   * Each chunk is written only while the version is still current (the desk row is locked as publishing locks it);
   * when a newer version was published meanwhile, the pass starts again under it.
   */
  async scoreNew(deskId: number, chunkSize: number): Promise<{ scored: number; version: number | null }> {
    let scored = 0;
    for (let pass = 0; pass < 5; pass++) {
      const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
      const version = desk?.currentModelVersion ?? null;
      if (!desk || version === null) return { scored, version: null };
      const model = await this.store.load(deskId, version);
      if (!model) return { scored, version: null };
      let after = 0;
      let overtaken = false;
      for (;;) {
        const items = await this.db.query<ChunkRow>(
          null,
          `SELECT i.id, t.featurizer, t.counts, CASE WHEN t.featurizer IS NULL OR t.featurizer <> $4 THEN i.text END AS text
           FROM items i LEFT JOIN item_term_counts t ON t.item_id = i.id
           WHERE i.desk_id = $1 AND i.id > $2 AND i.state <> 'decided'
             AND NOT EXISTS (SELECT 1 FROM predictions p WHERE p.item_id = i.id AND p.model_version = $3)
           ORDER BY i.id LIMIT ${chunkSize}`,
          [deskId, after, version, model.featurizerKey],
        );
        if (items.length === 0) break;
        const { rows, backfill } = this.predict(desk, model, version, items);
        const ids = items.map((it) => Number(it.id));
        const written = await this.db.write(async (m) => {
          const now = await this.db.queryOne<{ v: DbInt | null }>(
            m,
            `SELECT current_model_version AS v FROM desks WHERE id = $1${this.db.lockRows({ noKey: true })}`,
            [deskId],
          );
          if (now?.v == null || Number(now.v) !== version) return false;
          await this.db.insertRows(m, 'predictions', PREDICTION_COLUMNS, rows);
          await this.features.storeCounts(m, backfill);
          await this.db.query(
            m,
            `UPDATE items SET priority = (SELECT p.priority FROM predictions p WHERE p.item_id = items.id AND p.model_version = $1),
                    priority_model_version = $1
             WHERE desk_id = $2 AND id IN (${this.db.inList(ids.length, 3)})`,
            [version, deskId, ...ids],
          );
          return true;
        });
        if (!written) {
          overtaken = true;
          break;
        }
        scored += rows.length;
        after = ids[ids.length - 1];
      }
      if (!overtaken) return { scored, version };
    }
    return { scored, version: null };
  }

  /** Each item's prediction row (for `predictions`) and, for items without stored term counts, the counts to store. */
  private predict(desk: DeskEntity, model: LoadedModel, version: number, items: ChunkRow[]) {
    const setOptions = setOptionsOf(desk, model.categories);
    const strategy = desk.strategy === 'set-size' ? 'entropy' : desk.strategy;
    const rows: unknown[][] = [];
    const backfill: unknown[][] = [];
    let tokenised = 0;
    for (const it of items) {
      const id = Number(it.id);
      let counts: SparseVector;
      if (it.text === null) counts = decodeTermCounts(it.counts!);
      else {
        counts = model.featurizer.counts(it.text);
        tokenised++;
        if (it.featurizer === null) backfill.push([id, model.featurizerKey, encodeTermCounts(counts)]);
      }
      const probs = model.classifier.predictProba(model.weigh(counts));
      const setSize =
        desk.strategy === 'set-size' ? predictionSet(probs, model.calibration, setOptions).categories.length : 0;
      rows.push([
        id,
        version,
        desk.id,
        JSON.stringify(Array.from(probs)),
        uncertainty(probs, strategy),
        priorityOf(probs, desk.strategy, setSize),
      ]);
    }
    return { rows, backfill, tokenised };
  }
}
