import { BadRequestException, ConflictException, Inject, Injectable, NotFoundException } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { AuditService, type AuditActor } from '#audit';
import { CategoryEntity, Database, DeskDirectory, DeskEntity, VerdictEntity } from '#database';
import { JOBS, JobQueueService } from '#queues';
import { PredictionsService, type CalibrationStatus } from '#models';
import type { CreateDeskDto, UpdateDeskDto } from './desk.dto.js';

/** A desk with its categories in display order: what the API returns. */
export interface DeskView {
  id: number;
  name: string;
  categories: Array<{ id: number; name: string; position: number }>;
  seedTerms: Record<string, string[]>;
  coverageTarget: number;
  calibration: DeskEntity['calibration'];
  randomShare: number;
  secondOpinionShare: number;
  leaseSeconds: number;
  strategy: DeskEntity['strategy'];
  score: DeskEntity['score'];
  retrainEvery: number;
  retrainAfterSeconds: number;
  currentModelVersion: number | null;
  createdAt: Date;
  updatedAt: Date;
}

const RESERVED_CATEGORY_NAMES = ['abstain'];
const MAX_TERMS = 200;

/** Checks seed terms against the desk's categories; returns them cleaned (trimmed, de-duplicated). */
export function validateSeedTerms(seedTerms: unknown, categories: string[]): Record<string, string[]> {
  if (seedTerms === undefined || seedTerms === null) return {};
  if (typeof seedTerms !== 'object' || Array.isArray(seedTerms))
    throw new BadRequestException('seedTerms: expected an object mapping category names to lists of terms');
  const out: Record<string, string[]> = {};
  const problems: string[] = [];
  for (const [category, terms] of Object.entries(seedTerms as Record<string, unknown>)) {
    if (!categories.includes(category)) {
      problems.push(`seedTerms.${category}: not a category of this desk`);
      continue;
    }
    if (!Array.isArray(terms) || terms.some((t) => typeof t !== 'string')) {
      problems.push(`seedTerms.${category}: expected a list of strings`);
      continue;
    }
    const clean = [...new Set((terms as string[]).map((t) => t.trim()).filter((t) => t.length > 0))];
    if (clean.length > MAX_TERMS)
      problems.push(`seedTerms.${category}: at most ${MAX_TERMS} terms (got ${clean.length})`);
    const long = clean.find((t) => t.length > 100);
    if (long)
      problems.push(
        `seedTerms.${category}: a term is longer than 100 characters (${JSON.stringify(long.slice(0, 20))}…)`,
      );
    if (clean.length > 0) out[category] = clean;
  }
  if (problems.length) throw new BadRequestException(problems);
  return out;
}

function checkCategoryNames(names: string[]): void {
  const reserved = names.filter((n) => RESERVED_CATEGORY_NAMES.includes(n.toLowerCase()));
  if (reserved.length)
    throw new BadRequestException([
      `categories: ${JSON.stringify(reserved[0])} is reserved (abstaining is always possible)`,
    ]);
  const folded = names.map((n) => n.normalize('NFKC').toLowerCase());
  if (new Set(folded).size !== folded.length)
    throw new BadRequestException(['categories: two names differ only by case or form']);
}

@Injectable()
export class DesksService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
  ) {}

  async create(actor: AuditActor, dto: CreateDeskDto): Promise<DeskView> {
    checkCategoryNames(dto.categories);
    const seedTerms = validateSeedTerms(dto.seedTerms, dto.categories);
    const deskId = await this.db.write(async (m) => {
      if (await m.findOneBy(DeskEntity, { name: dto.name }))
        throw new ConflictException(`a desk named ${JSON.stringify(dto.name)} exists already`);
      const now = new Date();
      const desk = await m.save(
        DeskEntity,
        m.create(DeskEntity, {
          name: dto.name,
          seedTerms,
          coverageTarget: dto.coverageTarget ?? 0.9,
          calibration: dto.calibration ?? 'per-category',
          randomShare: dto.randomShare ?? 0.2,
          secondOpinionShare: dto.secondOpinionShare ?? 0.1,
          leaseSeconds: dto.leaseSeconds ?? 600,
          currentModelVersion: null,
          strategy: dto.strategy ?? 'entropy',
          score: dto.score ?? 'lac',
          retrainEvery: dto.retrainEvery ?? 10,
          retrainAfterSeconds: dto.retrainAfterSeconds ?? 30,
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
      await this.audit.record(m, actor, {
        action: 'desk.create',
        entityType: 'desk',
        entityId: desk.id,
        deskId: desk.id,
        after: settingsOf(view),
      });
      return desk.id;
    });
    return this.get(deskId);
  }

  async list(): Promise<DeskView[]> {
    const desks = await this.db.manager.find(DeskEntity, { order: { id: 'ASC' } });
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
   * Changes settings. A new coverage target or calibration mode changes every
   * set at once (sets are read from the stored calibration scores); the
   * answer then says what backs the new thresholds.
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
          const used = await m.countBy(VerdictEntity, { categoryId: c.id });
          if (used > 0)
            throw new ConflictException(
              `category ${JSON.stringify(c.name)} is used by ${used} verdict(s): categories can be added, but one in use cannot be removed or renamed`,
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
        if (clash) throw new ConflictException(`a desk named ${JSON.stringify(dto.name)} exists already`);
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
      if (dto.randomShare !== undefined) desk.randomShare = dto.randomShare;
      if (dto.secondOpinionShare !== undefined) desk.secondOpinionShare = dto.secondOpinionShare;
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
    if (seedTermsChanged) await this.jobs.add(JOBS.reseedDesk, { deskId });
    const view = await this.get(deskId);
    if (dto.coverageTarget === undefined && dto.calibration === undefined && dto.strategy === undefined) return view;
    const desk = (await this.db.manager.findOneBy(DeskEntity, { id: deskId }))!;
    const model = await this.predictions.current(desk);
    return { ...view, calibrationStatus: model ? this.predictions.calibrationStatus(desk, model) : null };
  }

  private async viewIn(m: EntityManager, deskId: number): Promise<DeskView> {
    const desk = await m.findOneBy(DeskEntity, { id: deskId });
    if (!desk) throw new NotFoundException(`no desk ${deskId}`);
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
    calibration: d.calibration,
    randomShare: d.randomShare,
    secondOpinionShare: d.secondOpinionShare,
    leaseSeconds: d.leaseSeconds,
    strategy: d.strategy,
    score: d.score,
    retrainEvery: d.retrainEvery,
    retrainAfterSeconds: d.retrainAfterSeconds,
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
    calibration: v.calibration,
    randomShare: v.randomShare,
    secondOpinionShare: v.secondOpinionShare,
    leaseSeconds: v.leaseSeconds,
    strategy: v.strategy,
    score: v.score,
    retrainEvery: v.retrainEvery,
    retrainAfterSeconds: v.retrainAfterSeconds,
  };
}
