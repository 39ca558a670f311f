import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity } from '#database';
import { predictionSet, uncertainty } from '#learning';
import type { ScoreChunkPayload } from '#queues';
import { ModelStore } from './model-store.service.js';
import { priorityOf } from './priority.js';
import { PAUSE_HOOK, type PauseHook } from './training.service.js';

/** Scores one chunk of a desk's open items under a new version and stores the predictions. */
@Injectable()
export class ScoringService {
  constructor(@Inject(Database) private readonly db: Database, @Inject(ModelStore) private readonly store: ModelStore, @Inject(PAUSE_HOOK) private readonly pause: PauseHook) {}

  async run(p: ScoreChunkPayload): Promise<{ scored: number; skipped?: string }> {
    const [state] = await this.db.query<{ state: string }>(null, 'SELECT state FROM model_versions WHERE desk_id = $1 AND version = $2', [p.deskId, p.version]);
    if (state?.state !== 'scoring') return { scored: 0, skipped: `version is ${state?.state ?? 'gone'}` };
    const model = await this.store.load(p.deskId, p.version);
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: p.deskId });
    if (!model || !desk) return { scored: 0, skipped: 'version or desk gone' };
    const items = await this.db.query<{ id: number; text: string }>(null,
      `SELECT id, text FROM items WHERE desk_id = $1 AND id >= $2 AND id < $3 AND state <> 'decided' ORDER BY id`, [p.deskId, p.fromId, p.toId]);
    await this.pause('scoring');
    const alpha = 1 - desk.coverageTarget;
    const strategy = desk.strategy === 'set-size' ? 'entropy' : desk.strategy;
    const rows: unknown[][] = [];
    for (const it of items) {
      const probs = model.classifier.predictProba(model.vectorize(it.text));
      const setSize = desk.strategy === 'set-size' ? predictionSet(probs, model.calibration, { alpha, score: desk.score, mode: desk.calibration }).categories.length : 0;
      rows.push([Number(it.id), p.version, p.deskId, JSON.stringify(Array.from(probs)), uncertainty(probs, strategy), priorityOf(probs, desk.strategy, setSize)]);
    }
    // Retried chunks skip rows already written.
    for (let i = 0; i < rows.length; i += 500) {
      const part = rows.slice(i, i + 500);
      const params: unknown[] = [];
      const tuples = part.map((r) => `(${r.map((v) => { params.push(v); return `$${params.length}`; }).join(', ')})`);
      await this.db.write((m) => this.db.query(m, `INSERT INTO predictions (item_id, model_version, desk_id, probabilities, uncertainty, priority) VALUES ${tuples.join(', ')} ON CONFLICT DO NOTHING`, params));
    }
    return { scored: rows.length };
  }
}
