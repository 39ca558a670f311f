import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskEntity, ModelReportEntity, ModelVersionEntity, type DbInt } from '#database';
import type { RandomCheck } from './figures/coverage-figures.js';

/** A `desk.update` line of the audit trail: the settings it changed, before and after. */
export interface DeskSettingsChange {
  at: Date;
  actor: string;
  action: string;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
}

/** One verdict of a report's period as the activity figures count it. */
export interface PeriodVerdict {
  reviewer: string;
  abstained: boolean;
  elapsedMs: number | null;
}

/** What a ready report stores. */
export interface ReadyReport {
  figures: string;
  html: string;
  figuresSha256: string;
  generatedAt: Date;
}

/** All SQL of the oversight reports: `model_reports`, and the versions, verdicts and trail lines a report reads. */
@Injectable()
export class ReportsRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  desk(deskId: number): Promise<DeskEntity | null> {
    return this.db.manager.findOneBy(DeskEntity, { id: deskId });
  }

  /** A version with everything stored about it. */
  version(deskId: number, version: number): Promise<ModelVersionEntity | null> {
    return this.db.manager.findOneBy(ModelVersionEntity, { deskId, version });
  }

  /** A version's state only (its model and figures left unread). */
  versionState(deskId: number, version: number): Promise<Pick<ModelVersionEntity, 'id' | 'state'> | null> {
    return this.db.manager.findOne(ModelVersionEntity, {
      where: { deskId, version },
      select: { id: true, state: true },
    });
  }

  /** The desk's published versions, newest first: number and publication time. */
  publishedVersions(deskId: number): Promise<Array<Pick<ModelVersionEntity, 'id' | 'version' | 'publishedAt'>>> {
    return this.db.manager.find(ModelVersionEntity, {
      where: { deskId, state: 'published' },
      order: { version: 'DESC' },
      select: { id: true, version: true, publishedAt: true },
    });
  }

  /** The desk's published versions, oldest first, with what a learning curve plots. */
  learningCurve(
    deskId: number,
  ): Promise<Array<Pick<ModelVersionEntity, 'id' | 'version' | 'publishedAt' | 'metrics' | 'calibration'>>> {
    return this.db.manager.find(ModelVersionEntity, {
      where: { deskId, state: 'published' },
      order: { version: 'ASC' },
      select: { id: true, version: true, publishedAt: true, metrics: true, calibration: true },
    });
  }

  /** The state of every report of the desk (their files left unread). */
  reportStates(deskId: number): Promise<ModelReportEntity[]> {
    return this.db.manager.find(ModelReportEntity, {
      where: { deskId },
      select: { id: true, version: true, state: true, generatedAt: true, figuresSha256: true, failure: true },
    });
  }

  report(deskId: number, version: number): Promise<ModelReportEntity | null> {
    return this.db.manager.findOneBy(ModelReportEntity, { deskId, version });
  }

  /** Marks the report as being written: a new row, or a failed one tried again. Another writer's row is left alone. */
  async startWriting(deskId: number, version: number, failedId: number | null): Promise<void> {
    const at = new Date();
    await this.db.write(async (m) => {
      if (failedId !== null)
        await m.update(ModelReportEntity, { id: failedId }, { state: 'writing', failure: null, startedAt: at });
      else
        await this.db.query(
          m,
          `INSERT INTO model_reports (desk_id, version, state, started_at) VALUES ($1, $2, 'writing', $3)
           ON CONFLICT (desk_id, version) DO NOTHING`,
          [deskId, version, this.db.time(at)],
        );
    });
  }

  async storeReady(deskId: number, version: number, r: ReadyReport): Promise<void> {
    await this.db.write((m) =>
      m.update(ModelReportEntity, { deskId, version }, { state: 'ready', failure: null, ...r }),
    );
  }

  /** Records a failure, unless a ready report exists: that one stays served. */
  async storeFailure(deskId: number, version: number, message: string): Promise<void> {
    await this.db.write((m) =>
      this.db.query(
        m,
        `UPDATE model_reports SET state = 'failed', failure = $3 WHERE desk_id = $1 AND version = $2 AND state <> 'ready'`,
        [deskId, version, message],
      ),
    );
  }

  /** The desk's settings changes from the audit trail, oldest first. */
  async settingsChanges(deskId: number): Promise<DeskSettingsChange[]> {
    const rows = await this.db.query<{
      at: unknown;
      actor_name: string;
      action: string;
      before: string | null;
      after: string | null;
    }>(
      null,
      `SELECT at, actor_name, action, before, after FROM audit_events
       WHERE desk_id = $1 AND entity_type = 'desk' AND action = 'desk.update' ORDER BY id`,
      [deskId],
    );
    return rows.map((r) => ({
      at: this.db.parseTime(r.at)!,
      actor: r.actor_name,
      action: r.action,
      before: r.before ? (JSON.parse(r.before) as Record<string, unknown>) : null,
      after: r.after ? (JSON.parse(r.after) as Record<string, unknown>) : null,
    }));
  }

  /** Every random check up to `to`, oldest first, as it stood at `to`: the verdict's category against the set shown with it. */
  async randomChecks(deskId: number, to: Date): Promise<Array<RandomCheck & { version: number }>> {
    const rows = await this.db.query<{
      created_at: unknown;
      category: string;
      shown_set: string;
      model_version: DbInt;
    }>(
      null,
      `SELECT v.created_at, c.name AS category, v.shown_set, v.model_version FROM verdicts v JOIN categories c ON c.id = v.category_id
       WHERE v.desk_id = $1 AND v.draw = 'random' AND v.model_version IS NOT NULL AND v.shown_set IS NOT NULL
         AND v.created_at <= $2 AND (v.undone_at IS NULL OR v.undone_at > $2) ORDER BY v.id`,
      [deskId, this.db.time(to)],
    );
    return rows.map((r) => ({
      at: this.db.parseTime(r.created_at)!,
      category: r.category,
      covered: (JSON.parse(r.shown_set) as string[]).includes(r.category),
      version: Number(r.model_version),
    }));
  }

  /** The stored probabilities of a version, by item id; empty once they are gone. One statement, so a concurrent clean-up cannot leave half. */
  async probabilities(deskId: number, version: number): Promise<number[][]> {
    const rows = await this.db.query<{ probabilities: string }>(
      null,
      'SELECT probabilities FROM predictions WHERE desk_id = $1 AND model_version = $2 ORDER BY item_id',
      [deskId, version],
    );
    return rows.map((r) => JSON.parse(r.probabilities) as number[]);
  }

  /** Verdicts of the period (after `from`, up to `to`) as they stood at its end: undone later still count, undone within it do not. */
  async periodVerdicts(deskId: number, from: Date, to: Date): Promise<PeriodVerdict[]> {
    const rows = await this.db.query<{ name: string; category_id: DbInt | null; elapsed_ms: DbInt | null }>(
      null,
      `SELECT u.name, v.category_id, v.elapsed_ms FROM verdicts v JOIN users u ON u.id = v.reviewer_id
       WHERE v.desk_id = $1 AND v.created_at > $2 AND v.created_at <= $3 AND (v.undone_at IS NULL OR v.undone_at > $3)
       ORDER BY v.id`,
      [deskId, this.db.time(from), this.db.time(to)],
    );
    return rows.map((r) => ({
      reviewer: r.name,
      abstained: r.category_id === null,
      elapsedMs: r.elapsed_ms === null ? null : Number(r.elapsed_ms),
    }));
  }
}
