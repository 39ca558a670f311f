import { Inject, Injectable } from '@nestjs/common';
import type { DeskEntity, VerdictSetSummary } from '#database';
import { ModelStore, PrevalenceService } from '#models';
import { AgreementService } from '#verdicts';
import { activityFigures } from './figures/activity-figures.js';
import { alertEpisodes, coverageFigure } from './figures/coverage-figures.js';
import { poolFigures } from './figures/pool-figures.js';
import { prevalenceSection } from './figures/prevalence-figures.js';
import { SettingsHistory } from './figures/settings-history.js';
import type {
  LearningPoint,
  PoolSection,
  PrevalenceSection,
  QualitySection,
  ReportFigures,
  VerdictCounts,
} from './report-figures.js';
import { ReportsRepository } from './reports.repository.js';

/** Why a report cannot be made (yet): the version is missing or not published. */
export class ReportNotPossible extends Error {}

type Settings = ReportFigures['settings'];

/**
 * Reads everything one version's report states from the database. Every
 * figure is fixed by stored data: the period ends at the version's
 * publication, verdicts count as they stood then (a later undo does not
 * change them), and the settings are those in force then, read back from the
 * audit trail. Making the report again therefore gives the same figures.
 */
@Injectable()
export class ReportData {
  constructor(
    @Inject(ReportsRepository) private readonly reports: ReportsRepository,
    @Inject(ModelStore) private readonly store: ModelStore,
    @Inject(AgreementService) private readonly agreement: AgreementService,
    @Inject(PrevalenceService) private readonly prevalenceService: PrevalenceService,
  ) {}

  /**
   * @param keptPool the pool figures of an earlier run, used when this
   *   version's predictions are gone (they are dropped once a newer version is published)
   * @param keptPrevalence the prevalence of an earlier run: kept as it was first computed
   */
  async figures(
    deskId: number,
    version: number,
    keptPool: PoolSection | null = null,
    keptPrevalence: PrevalenceSection | null = null,
  ): Promise<ReportFigures> {
    const desk = await this.reports.desk(deskId);
    const row = await this.reports.version(deskId, version);
    if (!desk || !row) throw new ReportNotPossible(`desk ${deskId} has no model version ${version}`);
    if (row.state !== 'published' || !row.publishedAt)
      throw new ReportNotPossible(`version ${version} of desk ${deskId} is ${row.state}, not published`);
    const model = await this.store.load(deskId, version);
    if (!model) throw new ReportNotPossible(`version ${version} of desk ${deskId} has no stored model`);
    const categories = model.categories;
    const to = row.publishedAt;
    const parent = row.parentVersion === null ? null : await this.reports.version(deskId, row.parentVersion);
    const from = parent?.publishedAt ?? desk.createdAt;
    // A desk started from another desk's version keeps that origin on its first version.
    const first = version === 1 ? row : await this.reports.version(deskId, 1);
    const origin = first?.model?.origin;
    const history = await this.settingsHistory(desk);
    const inForce = history.at(to);
    const settings: Settings = {
      coverageTarget: Number(inForce.coverageTarget),
      calibration: inForce.calibration as Settings['calibration'],
      score: inForce.score as Settings['score'],
      strategy: String(inForce.strategy),
      randomShare: Number(inForce.randomShare),
      secondOpinionShare: Number(inForce.secondOpinionShare),
    };
    const checks = await this.reports.randomChecks(deskId, to);
    const inPeriod = checks.filter((c) => c.at.getTime() > from.getTime());
    const pool = (await this.poolFigures(deskId, version, model.calibration, settings)) ?? keptPool;
    return {
      format: 'cribra-model-report',
      formatVersion: 1,
      desk: { id: deskId, name: typeof inForce.name === 'string' ? inForce.name : desk.name, categories },
      version: {
        version,
        parentVersion: row.parentVersion,
        createdAt: row.createdAt.toISOString(),
        publishedAt: to.toISOString(),
        verdictWatermark: row.verdictWatermark,
        ...(origin
          ? {
              startedFrom: {
                deskId: origin.deskId,
                deskName: origin.deskName,
                version: origin.version,
                untrained: origin.untrained,
              },
            }
          : {}),
      },
      period: {
        from: from.toISOString(),
        to: to.toISOString(),
        startsAt: parent?.publishedAt ? 'parent-published' : 'desk-created',
      },
      settings,
      training: counts(row.training, categories),
      calibration: counts(row.calibration, categories),
      coverage: {
        promised: settings.coverageTarget,
        mode: settings.calibration,
        checkedVersions: [...new Set(inPeriod.map((c) => c.version))].sort((a, b) => a - b),
        overall: coverageFigure(inPeriod),
        perCategory: categories.map((category) => ({
          category,
          ...coverageFigure(inPeriod.filter((c) => c.category === category)),
        })),
      },
      pool,
      quality: quality(row.metrics),
      learningCurve: await this.learningCurve(deskId, version),
      agreement: await this.agreement.forDesk(deskId, to),
      activity: activityFigures(await this.reports.periodVerdicts(deskId, from, to)),
      alerts: alertEpisodes(checks, from, (t) => Number(history.at(t).coverageTarget)),
      settingsChanges: history
        .between(from, to)
        .map((e) => ({ at: e.at.toISOString(), actor: e.actor, before: e.before ?? {}, after: e.after ?? {} })),
      prevalence: keptPrevalence ?? (await this.prevalence(desk, version, categories)),
    };
  }

  /**
   * The prevalence by week of posting under this version, as the desk stands
   * now: only while this version is current (its stored probabilities are
   * what the estimate uses); null otherwise.
   */
  private async prevalence(desk: DeskEntity, version: number, categories: string[]): Promise<PrevalenceSection | null> {
    if (desk.currentModelVersion !== version) return null;
    const asOf = new Date();
    const p = await this.prevalenceService.prevalence(desk, categories, 'week', 'posted');
    return p.modelVersion === version ? prevalenceSection(p, asOf) : null;
  }

  private async settingsHistory(desk: DeskEntity): Promise<SettingsHistory> {
    const current = {
      name: desk.name,
      coverageTarget: desk.coverageTarget,
      calibration: desk.calibration,
      score: desk.score,
      strategy: desk.strategy,
      randomShare: desk.randomShare,
      secondOpinionShare: desk.secondOpinionShare,
    };
    return new SettingsHistory(current, await this.reports.settingsChanges(desk.id));
  }

  /** Pool figures from this version's stored predictions; null when they are gone. One statement, so a concurrent clean-up cannot leave half. */
  private async poolFigures(
    deskId: number,
    version: number,
    calibration: Parameters<typeof poolFigures>[1],
    s: Settings,
  ): Promise<PoolSection | null> {
    const probabilities = await this.reports.probabilities(deskId, version);
    if (probabilities.length === 0) return null;
    return poolFigures(probabilities, calibration, { target: s.coverageTarget, mode: s.calibration, score: s.score });
  }

  private async learningCurve(deskId: number, upTo: number): Promise<LearningPoint[]> {
    const rows = await this.reports.learningCurve(deskId);
    return rows
      .filter((r) => r.version <= upTo && r.publishedAt)
      .map((r) => ({
        version: r.version,
        publishedAt: r.publishedAt!.toISOString(),
        calibrationItems: r.calibration.itemIds.length,
        macroF1: typeof r.metrics?.macroF1 === 'number' ? r.metrics.macroF1 : null,
        accuracy: typeof r.metrics?.accuracy === 'number' ? r.metrics.accuracy : null,
      }));
  }
}

function counts(s: VerdictSetSummary, categories: readonly string[]): VerdictCounts {
  return {
    total: s.itemIds.length,
    perCategory: categories.map((category) => ({ category, verdicts: s.counts[category] ?? 0 })),
    draws: { ...s.draws },
  };
}

function quality(m: Record<string, unknown> | null): QualitySection | null {
  if (!m || typeof m.n !== 'number') return null;
  const num = (v: unknown) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  const bins = Array.isArray(m.reliability) ? (m.reliability as Array<Record<string, unknown>>) : [];
  return {
    calibrationItems: m.n,
    accuracy: Number(m.accuracy),
    macroF1: Number(m.macroF1),
    logLoss: Number(m.logLoss),
    brier: Number(m.brier),
    ece: Number(m.ece),
    reliability: bins.map((b) => ({
      lower: Number(b.lower),
      upper: Number(b.upper),
      count: Number(b.count),
      meanConfidence: num(b.meanConfidence),
      accuracy: num(b.accuracy),
    })),
  };
}
