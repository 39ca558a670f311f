import { Inject, Injectable } from '@nestjs/common';
import { AuditService, type AuditActor } from '#audit';
import { Database, DeskDirectory, deskOr404, type ErasedBy } from '#database';
import { ModelStore } from '#models';
import { ErasureService } from './erasure.service.js';
import { RetentionRepository } from './retention.repository.js';
import { subjectHash } from './subject-hash.js';
import { InvalidInput } from '#errors';

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
    @Inject(RetentionRepository) private readonly repository: RetentionRepository,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(ErasureService) private readonly erasure: ErasureService,
    @Inject(ModelStore) private readonly models: ModelStore,
  ) {}

  /** Checks the query: exactly one of externalId and source, non-empty, at most 200 characters. */
  static selector(externalId: string | undefined, source: string | undefined): SubjectSelector {
    if ((externalId === undefined) === (source === undefined))
      throw new InvalidInput('give exactly one of: externalId, source');
    const [name, value] = externalId !== undefined ? ['externalId', externalId] : ['source', source!];
    if (value.length === 0 || value.length > 200)
      throw new InvalidInput(`${name}: 1 to 200 characters, got ${value.length}`);
    return externalId !== undefined ? { externalId } : { source: source! };
  }

  async export(actor: AuditActor, deskId: number, selector: SubjectSelector): Promise<SubjectExport> {
    deskOr404(deskId, await this.directory.get(deskId));
    const [column, value] =
      'externalId' in selector
        ? (['external_id', selector.externalId] as const)
        : (['source', selector.source] as const);
    // The salt is made here if the desk has none yet: the audit line keeps the selector's keyed hash only.
    const { salt, at } = await this.db.write(async (m) => ({
      salt: await this.erasure.salt(m, deskId),
      at: new Date(),
    }));
    const hash = subjectHash(salt, value)!;
    const rows = await this.repository.subjectItems(deskId, column, value, hash);
    const items: SubjectItem[] = rows.map((r) => ({
      ...r,
      text: r.erasedAt ? null : r.text,
      meta: r.erasedAt ? null : r.meta,
      verdicts: [],
      settlements: [],
      predictions: [],
    }));
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
    for (const { itemId, ...v } of await this.repository.verdictsOn(ids)) byId.get(itemId)!.verdicts.push(v);
    for (const { itemId, ...st } of await this.repository.settlementsOf(ids)) byId.get(itemId)!.settlements.push(st);
    const categories = new Map<number, string[] | null>();
    for (const p of await this.repository.predictionsOf(ids)) {
      const version = p.modelVersion;
      if (!categories.has(version))
        categories.set(version, (await this.models.load(deskId, version))?.categories ?? null);
      const names = categories.get(version);
      byId.get(p.itemId)!.predictions.push({
        modelVersion: version,
        probabilities: Object.fromEntries(p.probabilities.map((x, i) => [names?.[i] ?? String(i), x])),
      });
    }
  }
}
