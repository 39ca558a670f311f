import { createHash } from 'node:crypto';
import { Inject, Injectable, Logger } from '@nestjs/common';
import type { WriteReportPayload } from '#queues';
import { canonicalJson } from './canonical-json.js';
import { renderReport } from './html/render-report.js';
import { ReportData, ReportNotPossible } from './report-data.service.js';
import type { ReportFigures } from './report-figures.js';
import { ReportsRepository } from './reports.repository.js';
import { Conflict } from '#errors';

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
    @Inject(ReportsRepository) private readonly reports: ReportsRepository,
    @Inject(ReportData) private readonly data: ReportData,
  ) {}

  async write(p: WriteReportPayload): Promise<{ sha256: string; bytes: number }> {
    // A version that is missing or not published will not become reportable by retrying.
    const v = await this.reports.versionState(p.deskId, p.version);
    if (v?.state !== 'published')
      throw new Conflict(`desk ${p.deskId} has no published model version ${p.version} (${v?.state ?? 'none'})`);
    const existing = await this.reports.report(p.deskId, p.version);
    if (!existing) await this.reports.startWriting(p.deskId, p.version, null);
    else if (existing.state === 'failed') await this.reports.startWriting(p.deskId, p.version, existing.id);
    let figures: ReportFigures;
    try {
      const kept = existing?.figures ? (JSON.parse(existing.figures) as Partial<ReportFigures>) : null;
      figures = await this.data.figures(p.deskId, p.version, kept?.pool ?? null, kept?.prevalence ?? null);
    } catch (e) {
      await this.fail(p, e);
      if (e instanceof ReportNotPossible) throw new Conflict(e.message);
      throw e;
    }
    const json = canonicalJson(figures);
    const sha256 = createHash('sha256').update(json).digest('hex');
    const page = renderReport(JSON.parse(json) as ReportFigures, sha256);
    await this.reports.storeReady(p.deskId, p.version, {
      figures: json,
      html: page,
      figuresSha256: sha256,
      generatedAt: new Date(),
    });
    this.logger.log(
      `desk ${p.deskId} v${p.version}: report written (${json.length} bytes of figures, sha256 ${sha256.slice(0, 12)})`,
    );
    return { sha256, bytes: json.length };
  }

  /** Records the failure, unless a ready report exists: that one stays served. */
  private async fail(p: WriteReportPayload, e: unknown): Promise<void> {
    const message = e instanceof Error ? e.message : String(e);
    await this.reports.storeFailure(p.deskId, p.version, message.slice(0, 2000));
  }
}
