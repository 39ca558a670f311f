import { createHash } from 'node:crypto';
import { Inject, Injectable, Logger } from '@nestjs/common';
import { UnrecoverableError } from 'bullmq';
import { Database, ModelReportEntity, ModelVersionEntity } from '#database';
import type { WriteReportPayload } from '#queues';
import { canonicalJson } from './canonical-json.js';
import { renderReport } from './html/render-report.js';
import { ReportData, ReportNotPossible } from './report-data.service.js';
import type { ReportFigures } from './report-figures.js';

/**
 * Writes the oversight report of a published version: its figures as
 * canonical JSON and the HTML page made from them, stored in
 * `model_reports` so any API process can serve them. Writing again for the
 * same version replaces the files with the same bytes while the data behind
 * them is unchanged; a ready report stays readable meanwhile.
 */
@Injectable()
export class ReportWriter {
  private readonly logger = new Logger('Reports');

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(ReportData) private readonly data: ReportData,
  ) {}

  async write(p: WriteReportPayload): Promise<{ sha256: string; bytes: number }> {
    // A version that is missing or not published will not become reportable by retrying.
    const v = await this.db.manager.findOne(ModelVersionEntity, {
      where: { deskId: p.deskId, version: p.version },
      select: { id: true, state: true },
    });
    if (v?.state !== 'published')
      throw new UnrecoverableError(
        `desk ${p.deskId} has no published model version ${p.version} (${v?.state ?? 'none'})`,
      );
    const existing = await this.db.manager.findOneBy(ModelReportEntity, { deskId: p.deskId, version: p.version });
    if (!existing) {
      await this.db.write((m) =>
        this.db.query(
          m,
          `INSERT INTO model_reports (desk_id, version, state, started_at) VALUES ($1, $2, 'writing', $3) ON CONFLICT (desk_id, version) DO NOTHING`,
          [p.deskId, p.version, this.db.time(new Date())],
        ),
      );
    } else if (existing.state === 'failed') {
      await this.db.write((m) =>
        m.update(ModelReportEntity, { id: existing.id }, { state: 'writing', failure: null, startedAt: new Date() }),
      );
    }
    let figures: ReportFigures;
    try {
      const kept = existing?.figures ? (JSON.parse(existing.figures) as Partial<ReportFigures>) : null;
      figures = await this.data.figures(p.deskId, p.version, kept?.pool ?? null, kept?.prevalence ?? null);
    } catch (e) {
      await this.fail(p, e);
      if (e instanceof ReportNotPossible) throw new UnrecoverableError(e.message);
      throw e;
    }
    const json = canonicalJson(figures);
    const sha256 = createHash('sha256').update(json).digest('hex');
    const page = renderReport(JSON.parse(json) as ReportFigures, sha256);
    await this.db.write((m) =>
      m.update(
        ModelReportEntity,
        { deskId: p.deskId, version: p.version },
        { state: 'ready', figures: json, html: page, figuresSha256: sha256, failure: null, generatedAt: new Date() },
      ),
    );
    this.logger.log(
      `desk ${p.deskId} v${p.version}: report written (${json.length} bytes of figures, sha256 ${sha256.slice(0, 12)})`,
    );
    return { sha256, bytes: json.length };
  }

  /** Records the failure, unless a ready report exists: that one stays served. */
  private async fail(p: WriteReportPayload, e: unknown): Promise<void> {
    const message = e instanceof Error ? e.message : String(e);
    await this.db.write((m) =>
      this.db.query(
        m,
        `UPDATE model_reports SET state = 'failed', failure = $3 WHERE desk_id = $1 AND version = $2 AND state <> 'ready'`,
        [p.deskId, p.version, message.slice(0, 2000)],
      ),
    );
  }
}
