import { BadRequestException, Inject, Injectable, NotFoundException } from '@nestjs/common';
import { AuditService, type AuditActor } from '#audit';
import { Database, DeskDirectory, type DbInt, type ErasedBy } from '#database';
import { ModelStore } from '#models';
import { ErasureService } from './erasure.service.js';
import { subjectHash } from './subject-hash.js';

/** Who the export is about: one external id, or one source. */
export type SubjectSelector = { externalId: string } | { source: string };

/** Everything the desk holds about one item of the subject. */
export interface SubjectItem {
  id: number;
  /** Null once erased (the tombstone keeps only a keyed hash, which matched). */
  externalId: string | null;
  source: string | null;
  text: string | null;
  meta: Record<string, unknown> | null;
  postedAt: Date | null;
  importedAt: Date;
  state: string;
  erasedAt: Date | null;
  erasedBy: ErasedBy | null;
  verdicts: Array<{
    id: number;
    reviewer: string;
    category: string | null;
    abstain: boolean;
    draw: string;
    note: string | null;
    modelVersion: number | null;
    shownSet: string[] | null;
    createdAt: Date;
    undoneAt: Date | null;
  }>;
  settlements: Array<{ id: number; category: string; reason: string; settledBy: string; createdAt: Date }>;
  predictions: Array<{ modelVersion: number; probabilities: Record<string, number> }>;
}

export interface SubjectExport {
  deskId: number;
  selector: { externalId?: string; source?: string };
  at: Date;
  items: SubjectItem[];
}

const placeholders = (n: number, from = 1) => Array.from({ length: n }, (_, i) => `$${i + from}`).join(', ');
const CHUNK = 500;

/**
 * What a desk holds about one external id or one source: every item (erased ones as tombstones, found by the keyed
 * hash of their external id or source), with its verdicts, settlements and stored predictions. Each read is audited
 * with the selector's keyed hash and the count of items, never the selector itself.
 */
@Injectable()
export class SubjectService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(ErasureService) private readonly erasure: ErasureService,
    @Inject(ModelStore) private readonly models: ModelStore,
  ) {}

  /** Checks the query: exactly one of externalId and source, non-empty, at most 200 characters. */
  static selector(externalId: string | undefined, source: string | undefined): SubjectSelector {
    if ((externalId === undefined) === (source === undefined))
      throw new BadRequestException('give exactly one of: externalId, source');
    const [name, value] = externalId !== undefined ? ['externalId', externalId] : ['source', source!];
    if (value.length === 0 || value.length > 200)
      throw new BadRequestException(`${name}: 1 to 200 characters, got ${value.length}`);
    return externalId !== undefined ? { externalId } : { source: source! };
  }

  async export(actor: AuditActor, deskId: number, selector: SubjectSelector): Promise<SubjectExport> {
    if (!(await this.directory.get(deskId))) throw new NotFoundException(`no desk ${deskId}`);
    const [column, value] =
      'externalId' in selector ? ['external_id', selector.externalId] : ['source', selector.source];
    // The salt is made here if the desk has none yet: the audit line keeps the selector's keyed hash only.
    const { salt, at } = await this.db.write(async (m) => ({
      salt: await this.erasure.salt(m, deskId),
      at: new Date(),
    }));
    const hash = subjectHash(salt, value)!;
    const rows = await this.db.query<{
      id: DbInt;
      external_id: string | null;
      source: string | null;
      text: string;
      meta: string;
      posted_at: unknown;
      imported_at: unknown;
      state: string;
      erased_at: unknown;
      erased_by: ErasedBy | null;
    }>(
      null,
      `SELECT id, external_id, source, text, meta, posted_at, imported_at, state, erased_at, erased_by FROM items
       WHERE desk_id = $1 AND (${column} = $2 OR ${column}_hash = $3) ORDER BY id`,
      [deskId, value, hash],
    );
    const items: SubjectItem[] = rows.map((r) => {
      const erasedAt = this.db.parseTime(r.erased_at);
      return {
        id: Number(r.id),
        externalId: r.external_id,
        source: r.source,
        text: erasedAt ? null : r.text,
        meta: erasedAt ? null : (JSON.parse(r.meta) as Record<string, unknown>),
        postedAt: this.db.parseTime(r.posted_at),
        importedAt: this.db.parseTime(r.imported_at)!,
        state: r.state,
        erasedAt,
        erasedBy: r.erased_by,
        verdicts: [],
        settlements: [],
        predictions: [],
      };
    });
    const byId = new Map(items.map((i) => [i.id, i]));
    for (let k = 0; k < items.length; k += CHUNK) await this.details(deskId, items.slice(k, k + CHUNK), byId);
    await this.db.write((m) =>
      this.audit.record(m, actor, {
        action: 'subject.read',
        entityType: 'desk',
        entityId: deskId,
        deskId,
        after: { by: 'externalId' in selector ? 'externalId' : 'source', hash, items: items.length },
      }),
    );
    return { deskId, selector: 'externalId' in selector ? { externalId: value } : { source: value }, at, items };
  }

  private async details(deskId: number, part: SubjectItem[], byId: Map<number, SubjectItem>): Promise<void> {
    const ids = part.map((i) => i.id);
    if (ids.length === 0) return;
    const list = placeholders(ids.length);
    const verdicts = await this.db.query<{
      id: DbInt;
      item_id: DbInt;
      reviewer: string;
      category: string | null;
      abstain: boolean | number;
      draw: string;
      note: string | null;
      model_version: DbInt | null;
      shown_set: string | null;
      created_at: unknown;
      undone_at: unknown;
    }>(
      null,
      `SELECT v.id, v.item_id, u.name AS reviewer, c.name AS category, v.abstain, v.draw, v.note, v.model_version,
              v.shown_set, v.created_at, v.undone_at
       FROM verdicts v JOIN users u ON u.id = v.reviewer_id LEFT JOIN categories c ON c.id = v.category_id
       WHERE v.item_id IN (${list}) ORDER BY v.id`,
      ids,
    );
    for (const v of verdicts)
      byId.get(Number(v.item_id))!.verdicts.push({
        id: Number(v.id),
        reviewer: v.reviewer,
        category: v.category,
        abstain: Boolean(v.abstain),
        draw: v.draw,
        note: v.note,
        modelVersion: v.model_version === null ? null : Number(v.model_version),
        shownSet: v.shown_set === null ? null : (JSON.parse(v.shown_set) as string[]),
        createdAt: this.db.parseTime(v.created_at)!,
        undoneAt: this.db.parseTime(v.undone_at),
      });
    const settlements = await this.db.query<{
      id: DbInt;
      item_id: DbInt;
      category: string;
      reason: string;
      settled_by: string;
      created_at: unknown;
    }>(
      null,
      `SELECT s.id, s.item_id, c.name AS category, s.reason, u.name AS settled_by, s.created_at
       FROM settlements s JOIN categories c ON c.id = s.category_id JOIN users u ON u.id = s.settled_by
       WHERE s.item_id IN (${list}) ORDER BY s.id`,
      ids,
    );
    for (const s of settlements)
      byId.get(Number(s.item_id))!.settlements.push({
        id: Number(s.id),
        category: s.category,
        reason: s.reason,
        settledBy: s.settled_by,
        createdAt: this.db.parseTime(s.created_at)!,
      });
    const predictions = await this.db.query<{ item_id: DbInt; model_version: DbInt; probabilities: string }>(
      null,
      `SELECT item_id, model_version, probabilities FROM predictions WHERE item_id IN (${list}) ORDER BY item_id, model_version`,
      ids,
    );
    const categories = new Map<number, string[] | null>();
    for (const p of predictions) {
      const version = Number(p.model_version);
      if (!categories.has(version))
        categories.set(version, (await this.models.load(deskId, version))?.categories ?? null);
      const names = categories.get(version);
      const probs = JSON.parse(p.probabilities) as number[];
      byId.get(Number(p.item_id))!.predictions.push({
        modelVersion: version,
        probabilities: Object.fromEntries(probs.map((x, i) => [names?.[i] ?? String(i), x])),
      });
    }
  }
}
