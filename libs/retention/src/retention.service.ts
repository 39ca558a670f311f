import { Inject, Injectable } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import type { AuditActor } from '#audit';
import { Database, deskOr404, inListChunks, retentionOf, type RetentionSettings } from '#database';
import { ERASURE_BATCH, ErasureService } from './erasure.service.js';
import { RetentionClock } from './retention-clock.js';
import { RetentionRepository } from './retention.repository.js';

const DAY_MS = 24 * 3600 * 1000;

/** What one desk's retention run erased, or, in a dry run, would erase. */
export interface RetentionRun {
  deskId: number;
  dryRun: boolean;
  /** The time the periods were measured against. */
  at: Date;
  retention: RetentionSettings;
  /** Items erased (or that would be). */
  items: number;
  /** Of those, decided items by their label (settled, else decided), every category of the desk listed. */
  byCategory: Record<string, number>;
  /** Decided items without a label (every verdict an abstention). */
  unlabelled: number;
  /** Items never decided, past `openAfterDays`. */
  open: number;
}

/** Why an item is due: never decided, or decided with this label (null: none). */
type Due = { open: true } | { open: false; label: string | null };

/**
 * Applies the desks' retention periods: an item never decided goes `openAfterDays` after its import; a decided item
 * goes its label's period (`categories`), else `decidedAfterDays`, after its last decision (its latest live verdict or
 * settlement). Items go through {@link ErasureService.eraseIn} with `erasedBy: "retention"`, a batch per transaction,
 * each batch recorded as one erasure; the items of a batch are locked and judged again inside its transaction, so an
 * item decided meanwhile is kept or erased by its new state.
 */
@Injectable()
export class RetentionService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(RetentionRepository) private readonly repository: RetentionRepository,
    @Inject(ErasureService) private readonly erasure: ErasureService,
    @Inject(RetentionClock) private readonly clock: RetentionClock,
  ) {}

  /** Every desk with a retention period (or only `deskId`, which must exist). */
  async runAll(
    actor: AuditActor,
    opts: { deskId?: number; dryRun?: boolean; now?: Date } = {},
  ): Promise<RetentionRun[]> {
    const desks = opts.deskId === undefined ? await this.repository.deskIds() : [opts.deskId];
    const out: RetentionRun[] = [];
    for (const deskId of desks) out.push(await this.run(actor, deskId, opts));
    return out;
  }

  /** One desk's run at `now` (the clock's time by default); a dry run only counts. */
  async run(actor: AuditActor, deskId: number, opts: { dryRun?: boolean; now?: Date } = {}): Promise<RetentionRun> {
    const { desk, categories } = deskOr404(deskId, await this.repository.desk(deskId));
    const now = opts.now ?? this.clock.now();
    const retention = retentionOf(desk.retention);
    const result: RetentionRun = {
      deskId,
      dryRun: opts.dryRun === true,
      at: now,
      retention,
      items: 0,
      byCategory: Object.fromEntries(categories.map((c) => [c.name, 0])),
      unlabelled: 0,
      open: 0,
    };
    const count = (due: Iterable<Due>) => {
      for (const d of due) {
        result.items++;
        if (d.open) result.open++;
        else if (d.label === null) result.unlabelled++;
        else result.byCategory[d.label] = (result.byCategory[d.label] ?? 0) + 1;
      }
    };
    const candidates = await this.candidates(deskId, retention, now);
    for (const batch of inListChunks(candidates, ERASURE_BATCH)) {
      if (result.dryRun) {
        count((await this.due(null, deskId, retention, now, batch)).values());
        continue;
      }
      await this.db.write(async (m) => {
        // Lock first, then judge: a verdict that commits before the lock is seen, one after waits for the erasure.
        await this.repository.lockItems(m, batch);
        const due = await this.due(m, deskId, retention, now, batch);
        if (due.size === 0) return;
        const counts = await this.erasure.eraseIn(m, deskId, [...due.keys()], { by: 'retention', now });
        await this.erasure.record(m, actor, deskId, {
          by: 'retention',
          reason: 'retention period',
          asked: { externalIds: 0, sources: 0, itemIds: due.size },
          outcome: { ...counts, alreadyErased: 0 },
          now,
        });
        count(due.values());
      });
    }
    if (!result.dryRun && result.items > 0) await this.db.releaseErased();
    return result;
  }

  /**
   * Items that may be due: not erased, and imported before the shortest period that could apply to them (a decision
   * comes after the import, so an item imported later cannot be due by its decision either). Ids in order.
   */
  private async candidates(deskId: number, r: RetentionSettings, now: Date): Promise<number[]> {
    const decided = [r.decidedAfterDays, ...Object.values(r.categories)].filter((d): d is number => d !== null);
    const ids: number[] = [];
    const older = async (days: number, decidedItems: boolean) => {
      ids.push(
        ...(await this.repository.importedBefore(deskId, new Date(now.getTime() - days * DAY_MS), decidedItems)),
      );
    };
    if (r.openAfterDays !== null) await older(r.openAfterDays, false);
    if (decided.length) await older(Math.min(...decided), true);
    return [...new Set(ids)].sort((a, b) => a - b);
  }

  /** Which of these items are due at `now`, and why; read in `m` (the batch's transaction) or outside one. */
  private async due(
    m: EntityManager | null,
    deskId: number,
    r: RetentionSettings,
    now: Date,
    ids: readonly number[],
  ): Promise<Map<number, Due>> {
    const out = new Map<number, Due>();
    if (ids.length === 0) return out;
    const items = await this.repository.liveItems(m, deskId, ids);
    const cutoff = (days: number) => now.getTime() - days * DAY_MS;
    const decided: number[] = [];
    for (const it of items) {
      if (it.state !== 'decided') {
        if (r.openAfterDays !== null && it.importedAt.getTime() < cutoff(r.openAfterDays))
          out.set(it.id, { open: true });
      } else decided.push(it.id);
    }
    if (decided.length === 0) return out;
    const labels = await this.erasure.labels(m, decided);
    const last = await this.repository.lastDecisions(m, decided);
    for (const id of decided) {
      const label = labels.get(id) ?? null;
      const days = (label !== null ? r.categories[label] : undefined) ?? r.decidedAfterDays;
      const at = last.get(id);
      if (days === null || at === undefined) continue;
      if (at < cutoff(days)) out.set(id, { open: false, label });
    }
    return out;
  }
}
