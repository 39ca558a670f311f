import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity, type DbInt, type InsertColumn } from '#database';
import { predictionSet, uncertainty, type SparseVector } from '#learning';
import type { ScoreChunkPayload } from '#queues';
import { DeskFeaturesService } from './desk-features.service.js';
import { ModelStore } from './model-store.service.js';
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
        p.version,
        p.deskId,
        JSON.stringify(Array.from(probs)),
        uncertainty(probs, strategy),
        priorityOf(probs, desk.strategy, setSize),
      ]);
    }
    // Retried chunks skip rows already written.
    await this.db.write(async (m) => {
      await this.db.insertRows(m, 'predictions', PREDICTION_COLUMNS, rows);
      await this.features.storeCounts(m, backfill);
    });
    return { scored: rows.length, tokenised };
  }
}
