import { Inject, Injectable } from '@nestjs/common';
import { In, type EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import { APP_CONFIG, type AppConfig } from '#config';
import { MembershipService } from '#auth';
import {
  CategoryEntity,
  Database,
  DeskDirectory,
  DeskEntity,
  RETENTION_DAYS_MAX,
  retentionOf,
  VerdictEntity,
  type DbInt,
  type RetentionSettings,
} from '#database';
import { JOBS, JobQueueService } from '#queues';
import { ModelTransferService, PredictionsService, type CalibrationStatus, type PreparedTransfer } from '#models';
import { checkSeedTerms } from '#learning';
import type { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';
import { Conflict, InvalidInput, NotFound } from '#errors';

/** A desk with its categories in display order: what the API returns. */
export interface DeskView {
  id: number;
  name: string;
  categories: Array<{ id: number; name: string; position: number }>;
  seedTerms: Record<string, string[]>;
  coverageTarget: number;
  coverageTargets: Record<string, number>;
  calibration: DeskEntity['calibration'];
  confidence: number | null;
  watch: string[];
  randomShare: number;
  screenShare: number;
  secondOpinionShare: number;
  serveSimulatedSecondOpinions: boolean;
  leaseSeconds: number;
  strategy: DeskEntity['strategy'];
  score: DeskEntity['score'];
  retrainEvery: number;
  retrainAfterSeconds: number;
  retention: RetentionSettings;
  currentModelVersion: number | null;
  createdAt: Date;
  updatedAt: Date;
}

const RESERVED_CATEGORY_NAMES = ['abstain'];

/** Checks seed terms against the desk's categories; returns them cleaned (trimmed, de-duplicated). */
export function validateSeedTerms(seedTerms: unknown, categories: string[]): Record<string, string[]> {
  if (seedTerms !== undefined && seedTerms !== null && (typeof seedTerms !== 'object' || Array.isArray(seedTerms)))
    throw new InvalidInput('seedTerms: expected an object mapping category names to lists of terms');
  const checked = checkSeedTerms(seedTerms, categories);
  if (checked.problems.length) throw new InvalidInput(checked.problems);
  return checked.seedTerms;
}

/** Shares above one by more than rounding: the random draws and the review lane cannot take more than every lease. */
const SHARE_SLACK = 1e-9;

/** Refuses a random share and a review-lane share that add up to more than every lease. */
export function checkShares(randomShare: number, screenShare: number): void {
  if (randomShare + screenShare > 1 + SHARE_SLACK)
    throw new InvalidInput([
      `screenShare: randomShare + screenShare may not exceed 1 (got ${randomShare} + ${screenShare}); lower one of them`,
    ]);
}

/**
 * Checks the screening settings against the desk's categories and
 * calibration mode; returns them cleaned (watch in the desk's category
 * order). Marginal calibration promises coverage only over the pool as a
 * whole, so it can neither clear items of a watched category with a stated
 * miss rate nor give a category its own target.
 */
export function validateScreening(
  watch: unknown,
  coverageTargets: unknown,
  calibration: DeskEntity['calibration'],
  categories: string[],
): { watch: string[]; coverageTargets: Record<string, number> } {
  const problems: string[] = [];
  const list = Array.isArray(watch) ? (watch as unknown[]) : [];
  for (const c of list)
    if (typeof c !== 'string' || !categories.includes(c))
      problems.push(`watch: ${JSON.stringify(c)} is not a category of this desk`);
  const targets: Record<string, number> = {};
  if (typeof coverageTargets !== 'object' || coverageTargets === null || Array.isArray(coverageTargets))
    problems.push('coverageTargets: expected an object mapping category names to targets');
  else
    for (const [c, t] of Object.entries(coverageTargets as Record<string, unknown>)) {
      if (!categories.includes(c)) problems.push(`coverageTargets.${c}: not a category of this desk`);
      else if (typeof t !== 'number' || !Number.isFinite(t) || t < 0.5 || t > 0.999)
        problems.push(`coverageTargets.${c}: a target must be a number from 0.5 to 0.999, got ${JSON.stringify(t)}`);
      else targets[c] = t;
    }
  if (calibration === 'marginal' && list.length > 0)
    problems.push(
      'watch: marginal calibration gives no promise per category, so it cannot clear items with a stated miss rate; use calibration "per-category" or watch no category',
    );
  if (calibration === 'marginal' && Object.keys(targets).length > 0)
    problems.push('coverageTargets: a target per category needs calibration "per-category"');
  if (problems.length) throw new InvalidInput(problems);
  return { watch: categories.filter((c) => list.includes(c)), coverageTargets: targets };
}

/**
 * Applies a change of retention periods to the current ones and checks the result: each period a whole number of days
 * from 1 to {@link RETENTION_DAYS_MAX} or null (keep), each key of `categories` a category of the desk. Members not
 * given stay; `categories` is replaced as a whole (a category mapped to null is left out). Every problem is named.
 */
export function validateRetention(
  change: unknown,
  current: RetentionSettings,
  categories: string[],
): RetentionSettings {
  if (typeof change !== 'object' || change === null || Array.isArray(change))
    throw new InvalidInput(['retention: expected an object with decidedAfterDays, categories, openAfterDays']);
  const problems: string[] = [];
  const days = (field: string, v: unknown): v is number | null => {
    if (v === null || (Number.isInteger(v) && (v as number) >= 1 && (v as number) <= RETENTION_DAYS_MAX)) return true;
    problems.push(
      `${field}: a whole number of days from 1 to ${RETENTION_DAYS_MAX}, or null to keep; got ${JSON.stringify(v)}`,
    );
    return false;
  };
  const out = retentionOf(current);
  for (const [k, v] of Object.entries(change as Record<string, unknown>)) {
    if (k === 'decidedAfterDays' || k === 'openAfterDays') {
      if (days(`retention.${k}`, v)) out[k] = v;
    } else if (k === 'categories') {
      if (v === null) {
        out.categories = {};
        continue;
      }
      if (typeof v !== 'object' || Array.isArray(v)) {
        problems.push('retention.categories: expected an object mapping category names to days');
        continue;
      }
      const map: Record<string, number> = {};
      for (const [c, d] of Object.entries(v as Record<string, unknown>)) {
        if (!categories.includes(c)) problems.push(`retention.categories.${c}: not a category of this desk`);
        else if (days(`retention.categories.${c}`, d) && d !== null) map[c] = d;
      }
      // In the desk's category order, so the same periods always read the same.
      out.categories = Object.fromEntries(categories.filter((c) => c in map).map((c) => [c, map[c]]));
    } else problems.push(`retention.${k}: unknown; expected decidedAfterDays, categories or openAfterDays`);
  }
  if (problems.length) throw new InvalidInput(problems);
  return out;
}

function checkCategoryNames(names: string[]): void {
  const reserved = names.filter((n) => RESERVED_CATEGORY_NAMES.includes(n.toLowerCase()));
  if (reserved.length)
    throw new InvalidInput([`categories: ${JSON.stringify(reserved[0])} is reserved (abstaining is always possible)`]);
  const folded = names.map((n) => n.normalize('NFKC').toLowerCase());
  if (new Set(folded).size !== folded.length)
    throw new InvalidInput(['categories: two names differ only by case or form']);
}

@Injectable()
export class DesksService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(MembershipService) private readonly members: MembershipService,
    @Inject(ModelTransferService) private readonly transfers: ModelTransferService,
  ) {}

  /**
   * Creates a desk. With `startFrom` (the caller's right to read that desk is the controller's check), the source
   * version is checked first and becomes the desk's version 1 in the same transaction; its scoring starts after the
   * commit.
   */
  async create(
    actor: AuditActor,
    dto: CreateDeskDto,
  ): Promise<DeskView & { startedFrom?: PreparedTransfer['model']['origin'] }> {
    checkCategoryNames(dto.categories);
    const seedTerms = validateSeedTerms(dto.seedTerms, dto.categories);
    const screening = validateScreening(
      dto.watch ?? [],
      dto.coverageTargets ?? {},
      dto.calibration ?? 'per-category',
      dto.categories,
    );
    const randomShare = dto.randomShare ?? 0.2;
    const screenShare = dto.screenShare ?? Math.min(0.5, 1 - randomShare);
    checkShares(randomShare, screenShare);
    const transfer = dto.startFrom
      ? await this.transfers.prepare(dto.startFrom.deskId, dto.startFrom.version, dto.categories)
      : null;
    const deskId = await this.db.write(async (m) => {
      if (await m.findOneBy(DeskEntity, { name: dto.name }))
        throw new Conflict(`a desk named ${JSON.stringify(dto.name)} exists already`);
      const now = new Date();
      const desk = await m.save(
        DeskEntity,
        m.create(DeskEntity, {
          name: dto.name,
          seedTerms,
          coverageTarget: dto.coverageTarget ?? 0.9,
          calibration: dto.calibration ?? 'per-category',
          watch: screening.watch,
          coverageTargets: screening.coverageTargets,
          confidence: dto.confidence ?? null,
          randomShare,
          screenShare,
          secondOpinionShare: dto.secondOpinionShare ?? 0.1,
          serveSimulatedSecondOpinions: dto.serveSimulatedSecondOpinions ?? false,
          leaseSeconds: dto.leaseSeconds ?? 600,
          currentModelVersion: null,
          strategy: dto.strategy ?? 'entropy',
          score: dto.score ?? 'lac',
          retrainEvery: dto.retrainEvery ?? 10,
          retrainAfterSeconds: dto.retrainAfterSeconds ?? 30,
          retention: {},
          createdBy: actor.id ?? 0,
          createdAt: now,
          updatedAt: now,
        }),
      );
      await m.insert(
        CategoryEntity,
        dto.categories.map((name, i) => ({ deskId: desk.id, name, position: i + 1, createdAt: now })),
      );
      const view = await this.viewIn(m, desk.id);
      // The creator supervises the desk: nobody else sees it until they are made members.
      if (actor.id !== null) await this.members.enrol(m, actor, desk.id, actor.id, 'supervisor');
      await this.audit.record(m, actor, {
        action: 'desk.create',
        entityType: 'desk',
        entityId: desk.id,
        deskId: desk.id,
        after: settingsOf(view),
      });
      if (transfer) {
        await this.transfers.install(m, desk.id, dto.categories, transfer);
        const { deskId: fromDesk, version, untrained, dropped } = transfer.model.origin;
        await this.audit.record(m, actor, {
          action: 'desk.start-from',
          entityType: 'desk',
          entityId: desk.id,
          deskId: desk.id,
          after: { fromDesk, version, untrained, dropped },
        });
      }
      return desk.id;
    });
    if (!transfer) return this.get(deskId);
    await this.transfers.start(deskId);
    return { ...(await this.get(deskId)), startedFrom: transfer.model.origin };
  }

  /** The desks with these ids, or every desk when `ids` is `'all'`. */
  async list(ids: number[] | 'all'): Promise<DeskView[]> {
    if (ids !== 'all' && ids.length === 0) return [];
    const desks = await this.db.manager.find(DeskEntity, {
      where: ids === 'all' ? {} : { id: In(ids) },
      order: { id: 'ASC' },
    });
    const cats = await this.db.manager.find(CategoryEntity, { order: { position: 'ASC' } });
    return desks.map((d) =>
      toView(
        d,
        cats.filter((c) => c.deskId === d.id),
      ),
    );
  }

  async get(deskId: number): Promise<DeskView> {
    return this.viewIn(this.db.manager, deskId);
  }

  /**
   * Changes settings. A new coverage target (the desk's or a category's),
   * calibration mode, confidence or list of watched categories changes every
   * set at once (sets are read from the stored calibration scores, without
   * retraining); the answer then says what backs the new thresholds.
   */
  async update(
    actor: AuditActor,
    deskId: number,
    dto: UpdateDeskDto,
  ): Promise<DeskView & { calibrationStatus?: CalibrationStatus | null }> {
    const seedTermsChanged = await this.db.write(async (m) => {
      const before = await this.viewIn(m, deskId);
      const desk = (await m.findOneBy(DeskEntity, { id: deskId }))!;
      const now = new Date();
      let categoryNames = before.categories.map((c) => c.name);
      if (dto.categories) {
        checkCategoryNames(dto.categories);
        const removed = before.categories.filter((c) => !dto.categories!.includes(c.name));
        for (const c of removed) {
          const verdicts = await m.countBy(VerdictEntity, { categoryId: c.id });
          const settled = await this.db.queryOne<{ n: DbInt }>(
            m,
            'SELECT COUNT(*) AS n FROM settlements WHERE category_id = $1',
            [c.id],
          );
          const uses = [
            verdicts ? `${verdicts} verdict(s)` : '',
            Number(settled?.n ?? 0) ? `${Number(settled!.n)} settlement(s)` : '',
          ].filter(Boolean);
          if (uses.length)
            throw new Conflict(
              `category ${JSON.stringify(c.name)} is used by ${uses.join(' and ')}: categories can be added, but one in use cannot be removed or renamed`,
            );
        }
        // The number keys of the queue follow the order: once reviewers have used them, moving a category would
        // silently give a key another meaning. New categories may still be added at the end.
        const keptOrder = dto.categories.filter((n) => before.categories.some((c) => c.name === n));
        const beforeOrder = before.categories.map((c) => c.name).filter((n) => keptOrder.includes(n));
        if (keptOrder.join('\n') !== beforeOrder.join('\n')) {
          const used = await this.db.queryOne<{ n: DbInt }>(
            m,
            `SELECT (SELECT COUNT(*) FROM verdicts WHERE desk_id = $1 AND undone_at IS NULL)
                  + (SELECT COUNT(*) FROM settlements WHERE desk_id = $1) AS n`,
            [deskId],
          );
          if (Number(used?.n ?? 0) > 0)
            throw new Conflict(
              `categories: the order cannot change once the desk has verdicts, because the number keys of the queue follow it (key 1 is ${JSON.stringify(before.categories[0].name)}); keep the order and add new categories at the end`,
            );
        }
        if (removed.length)
          await m.delete(
            CategoryEntity,
            removed.map((c) => c.id),
          );
        for (const [i, name] of dto.categories.entries()) {
          const existing = before.categories.find((c) => c.name === name);
          if (existing) await m.update(CategoryEntity, { id: existing.id }, { position: i + 1 });
          else await m.insert(CategoryEntity, { deskId, name, position: i + 1, createdAt: now });
        }
        categoryNames = dto.categories;
      }
      if (dto.name !== undefined && dto.name !== desk.name) {
        const clash = await m.findOneBy(DeskEntity, { name: dto.name });
        if (clash) throw new Conflict(`a desk named ${JSON.stringify(dto.name)} exists already`);
        desk.name = dto.name;
      }
      if (dto.seedTerms !== undefined) {
        desk.seedTerms = validateSeedTerms(dto.seedTerms, categoryNames);
      } else if (dto.categories) {
        // Terms of a removed category go with it.
        desk.seedTerms = Object.fromEntries(Object.entries(desk.seedTerms).filter(([k]) => categoryNames.includes(k)));
      }
      const termsChanged = JSON.stringify(desk.seedTerms) !== JSON.stringify(before.seedTerms);
      if (dto.coverageTarget !== undefined) desk.coverageTarget = dto.coverageTarget;
      if (dto.calibration !== undefined) desk.calibration = dto.calibration;
      // Watch and targets of a removed category go with it; what is left must suit the (new) calibration mode.
      const screening = validateScreening(
        dto.watch ?? desk.watch.filter((c) => categoryNames.includes(c)),
        dto.coverageTargets ??
          Object.fromEntries(Object.entries(desk.coverageTargets).filter(([k]) => categoryNames.includes(k))),
        desk.calibration,
        categoryNames,
      );
      desk.watch = screening.watch;
      desk.coverageTargets = screening.coverageTargets;
      if (dto.confidence !== undefined) desk.confidence = dto.confidence;
      // The period of a removed category goes with it.
      const retention = retentionOf(desk.retention);
      retention.categories = Object.fromEntries(
        Object.entries(retention.categories).filter(([k]) => categoryNames.includes(k)),
      );
      desk.retention =
        dto.retention === undefined ? retention : validateRetention(dto.retention, retention, categoryNames);
      if (dto.randomShare !== undefined) desk.randomShare = dto.randomShare;
      if (dto.screenShare !== undefined) desk.screenShare = dto.screenShare;
      checkShares(desk.randomShare, desk.screenShare);
      if (dto.secondOpinionShare !== undefined) desk.secondOpinionShare = dto.secondOpinionShare;
      if (dto.serveSimulatedSecondOpinions !== undefined)
        desk.serveSimulatedSecondOpinions = dto.serveSimulatedSecondOpinions;
      if (dto.leaseSeconds !== undefined) desk.leaseSeconds = dto.leaseSeconds;
      if (dto.strategy !== undefined) desk.strategy = dto.strategy;
      if (dto.score !== undefined) desk.score = dto.score;
      if (dto.retrainEvery !== undefined) desk.retrainEvery = dto.retrainEvery;
      if (dto.retrainAfterSeconds !== undefined) desk.retrainAfterSeconds = dto.retrainAfterSeconds;
      desk.updatedAt = now;
      await m.save(DeskEntity, desk);
      const after = await this.viewIn(m, deskId);
      const [b, a] = [settingsOf(before), settingsOf(after)];
      const changed = Object.keys(a).filter((k) => JSON.stringify(a[k]) !== JSON.stringify(b[k]));
      if (changed.length) {
        await this.audit.record(m, actor, {
          action: 'desk.update',
          entityType: 'desk',
          entityId: deskId,
          deskId,
          before: Object.fromEntries(changed.map((k) => [k, b[k]])),
          after: Object.fromEntries(changed.map((k) => [k, a[k]])),
        });
      }
      return termsChanged;
    });
    this.directory.forget(deskId);
    if (seedTermsChanged) {
      await this.jobs.add(JOBS.reseedDesk, { deskId });
      // Multi-word seed terms are counted as one token: the suggestions need a new count.
      await this.jobs.add(JOBS.countTerms, { deskId }, { delay: this.config.termsAfterSeconds * 1000 });
    }
    const view = await this.get(deskId);
    const setsChanged = [dto.coverageTarget, dto.coverageTargets, dto.calibration, dto.confidence, dto.watch];
    if (setsChanged.every((x) => x === undefined) && dto.strategy === undefined) return view;
    const desk = (await this.db.manager.findOneBy(DeskEntity, { id: deskId }))!;
    const model = await this.predictions.current(desk);
    return { ...view, calibrationStatus: model ? this.predictions.calibrationStatus(desk, model) : null };
  }

  private async viewIn(m: EntityManager, deskId: number): Promise<DeskView> {
    const desk = await m.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFound(`no desk ${deskId}`);
    const cats = await m.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } });
    return toView(desk, cats);
  }
}

function toView(d: DeskEntity, cats: CategoryEntity[]): DeskView {
  return {
    id: d.id,
    name: d.name,
    categories: cats.map((c) => ({ id: c.id, name: c.name, position: c.position })),
    seedTerms: d.seedTerms,
    coverageTarget: d.coverageTarget,
    coverageTargets: d.coverageTargets,
    calibration: d.calibration,
    confidence: d.confidence,
    watch: d.watch,
    randomShare: d.randomShare,
    screenShare: d.screenShare,
    secondOpinionShare: d.secondOpinionShare,
    serveSimulatedSecondOpinions: d.serveSimulatedSecondOpinions,
    leaseSeconds: d.leaseSeconds,
    strategy: d.strategy,
    score: d.score,
    retrainEvery: d.retrainEvery,
    retrainAfterSeconds: d.retrainAfterSeconds,
    retention: retentionOf(d.retention),
    currentModelVersion: d.currentModelVersion,
    createdAt: d.createdAt,
    updatedAt: d.updatedAt,
  };
}

function settingsOf(v: DeskView): Record<string, unknown> {
  return {
    name: v.name,
    categories: v.categories.map((c) => c.name),
    seedTerms: v.seedTerms,
    coverageTarget: v.coverageTarget,
    coverageTargets: v.coverageTargets,
    calibration: v.calibration,
    confidence: v.confidence,
    watch: v.watch,
    randomShare: v.randomShare,
    screenShare: v.screenShare,
    secondOpinionShare: v.secondOpinionShare,
    serveSimulatedSecondOpinions: v.serveSimulatedSecondOpinions,
    leaseSeconds: v.leaseSeconds,
    strategy: v.strategy,
    score: v.score,
    retrainEvery: v.retrainEvery,
    retrainAfterSeconds: v.retrainAfterSeconds,
    retention: v.retention,
  };
}
