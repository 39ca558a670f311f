import { Inject, Injectable } from '@nestjs/common';
import { CategoryEntity, Database, DeskEntity, ModelVersionEntity, type DbInt } from '#database';

/** An open item's stored probabilities under one version (JSON text). */
export interface StoredPrediction {
  itemId: number;
  probabilities: string;
}

/** What the item lists show of an item beside its prediction. */
export interface ItemShown {
  id: number;
  text: string;
  externalId: string | null;
  source: string | null;
}

/** A published version without a report, or a desk with verdicts no live version has learned from. */
export interface Backlog {
  unreported: Array<{ deskId: number; version: number }>;
  behind: number[];
}

/**
 * The SQL of the model-version reads: the versions of a desk, one version, the open items' stored predictions page by
 * page, the texts shown beside them, and the backlog the worker's sweep looks for.
 */
@Injectable()
export class ModelVersionsRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** The desk as it is now (not through the directory's short cache: these reads must see the current version). */
  desk(deskId: number): Promise<DeskEntity | null> {
    return this.db.manager.findOneBy(DeskEntity, { id: deskId });
  }

  /** Every version of the desk, newest first, without the stored classifier. */
  versions(deskId: number): Promise<ModelVersionEntity[]> {
    return this.db.manager.find(ModelVersionEntity, {
      where: { deskId },
      order: { version: 'DESC' },
      select: {
        id: true,
        deskId: true,
        version: true,
        parentVersion: true,
        state: true,
        verdictWatermark: true,
        training: true,
        calibration: true,
        metrics: true,
        timings: true,
        failure: true,
        createdAt: true,
        publishedAt: true,
      },
    });
  }

  version(deskId: number, version: number): Promise<ModelVersionEntity | null> {
    return this.db.manager.findOneBy(ModelVersionEntity, { deskId, version });
  }

  /** Up to `limit` open items after `afterItemId` (by id) with the version's stored probabilities. */
  async openPredictions(
    deskId: number,
    version: number,
    afterItemId: number,
    limit: number,
  ): Promise<StoredPrediction[]> {
    const rows = await this.db.query<{ item_id: DbInt; probabilities: string }>(
      null,
      `SELECT p.item_id, p.probabilities FROM predictions p JOIN items i ON i.id = p.item_id WHERE p.desk_id = $1 AND p.model_version = $2 AND i.state <> 'decided' AND p.item_id > $3 ORDER BY p.item_id LIMIT $4`,
      [deskId, version, afterItemId, limit],
    );
    return rows.map((r) => ({ itemId: Number(r.item_id), probabilities: r.probabilities }));
  }

  /** As {@link openPredictions}, each with the item's text and references (the predictions export). */
  async openPredictionsShown(
    deskId: number,
    version: number,
    afterItemId: number,
    limit: number,
  ): Promise<Array<StoredPrediction & Omit<ItemShown, 'id'>>> {
    const rows = await this.db.query<{
      item_id: DbInt;
      probabilities: string;
      external_id: string | null;
      source: string | null;
      text: string;
    }>(
      null,
      `SELECT p.item_id, p.probabilities, i.external_id, i.source, i.text FROM predictions p JOIN items i ON i.id = p.item_id WHERE p.desk_id = $1 AND p.model_version = $2 AND i.state <> 'decided' AND p.item_id > $3 ORDER BY p.item_id LIMIT $4`,
      [deskId, version, afterItemId, limit],
    );
    return rows.map((r) => ({
      itemId: Number(r.item_id),
      probabilities: r.probabilities,
      externalId: r.external_id,
      source: r.source,
      text: r.text,
    }));
  }

  /** The desk's category names in key order. */
  async categoryNames(deskId: number): Promise<string[]> {
    const rows = await this.db.manager.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } });
    return rows.map((c) => c.name);
  }

  /** The items' texts and references, by id (at most a page of them). */
  async itemsShown(ids: readonly number[]): Promise<Map<number, ItemShown>> {
    if (ids.length === 0) return new Map();
    const rows = await this.db.query<{ id: DbInt; text: string; external_id: string | null; source: string | null }>(
      null,
      `SELECT id, text, external_id, source FROM items WHERE id IN (${this.db.inList(ids.length)})`,
      [...ids],
    );
    return new Map(
      rows.map((r) => [Number(r.id), { id: Number(r.id), text: r.text, externalId: r.external_id, source: r.source }]),
    );
  }

  /**
   * Published versions with no report yet (their report job was lost, or they predate reports), and desks with
   * verdicts newer than every live version's watermark (their retrain request was lost, say while Redis was down).
   */
  async backlog(): Promise<Backlog> {
    const unreported = await this.db.query<{ desk_id: DbInt; version: DbInt }>(
      null,
      `SELECT m.desk_id, m.version FROM model_versions m WHERE m.state = 'published' AND NOT EXISTS (SELECT 1 FROM model_reports r WHERE r.desk_id = m.desk_id AND r.version = m.version) ORDER BY m.desk_id, m.version`,
    );
    const behind = await this.db.query<{ id: DbInt }>(
      null,
      `SELECT d.id FROM desks d WHERE EXISTS (SELECT 1 FROM verdicts v WHERE v.desk_id = d.id AND v.id > COALESCE((SELECT MAX(m.verdict_watermark) FROM model_versions m WHERE m.desk_id = d.id AND m.state IN ('training', 'scoring', 'published')), 0))`,
    );
    return {
      unreported: unreported.map((r) => ({ deskId: Number(r.desk_id), version: Number(r.version) })),
      behind: behind.map((d) => Number(d.id)),
    };
  }
}
