import {
  BadRequestException,
  Controller,
  Get,
  Header,
  Inject,
  NotFoundException,
  Param,
  ParseIntPipe,
  Res,
} from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { ApiAnswer, ApiErrors, ApiTextAnswer, type Answer } from '#api-docs';
import { Roles, OnDesk } from '#auth';
import type { ModelReportEntity } from '#database';
import { deskOr404 } from '#database';
import { JOBS, JobQueueService, jobOptions } from '#queues';
import { ReportAnswer, ReportListAnswer } from './report.responses.js';
import { ReportsRepository } from './reports.repository.js';

const READERS = ['supervisor', 'auditor'] as const;

/** The version number in a path: a whole number from 1 on. */
const versionPipe = new ParseIntPipe({
  exceptionFactory: () => new BadRequestException('version: expected a whole number from 1'),
});

/**
 * Oversight reports per model version. The page allows nothing to load (its
 * own policy and the response header), so a saved copy is as safe to open
 * as the served one.
 */
@ApiTags('reports')
@Controller('api/desks/:deskId')
export class ReportsController {
  constructor(
    @Inject(ReportsRepository) private readonly reports: ReportsRepository,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  /** Every published version with the state of its report. */
  @Roles(...READERS)
  @OnDesk()
  @Get('reports')
  @ApiAnswer(ReportListAnswer)
  async list(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof ReportListAnswer>> {
    await this.desk(deskId);
    const versions = await this.reports.publishedVersions(deskId);
    const reports = await this.reports.reportStates(deskId);
    const byVersion = new Map(reports.map((r) => [r.version, r]));
    return {
      reports: versions.map((v) => {
        const r = byVersion.get(v.version);
        return {
          version: v.version,
          publishedAt: v.publishedAt,
          status: r?.state ?? 'pending',
          generatedAt: r?.generatedAt ?? null,
          figuresSha256: r?.figuresSha256 ?? null,
          failure: r?.failure ?? null,
        };
      }),
    };
  }

  @Roles(...READERS)
  @OnDesk()
  @Get('models/:version/report.json')
  @Header('Content-Type', 'application/json; charset=utf-8')
  @ApiAnswer(ReportAnswer, { description: 'the report’s figures, as stored (canonical JSON)' })
  @ApiErrors({ 404: 'no such version, not published, the report is still being written, or it failed' })
  async json(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('version', versionPipe) version: number,
    @Res({ passthrough: true }) res: Response,
  ): Promise<string> {
    const report = await this.ready(deskId, version);
    res.setHeader('Content-Disposition', `inline; filename="desk-${deskId}-model-${version}-report.json"`);
    return report.figures!;
  }

  @Roles(...READERS)
  @OnDesk()
  @Get('models/:version/report.html')
  @ApiTextAnswer('text/html', 'the report as one self-contained page (no script, loads nothing)')
  @ApiErrors({ 404: 'no such version, not published, the report is still being written, or it failed' })
  @Header('Content-Type', 'text/html; charset=utf-8')
  @Header(
    'Content-Security-Policy',
    "default-src 'none'; style-src 'unsafe-inline'; img-src data:; frame-ancestors 'none'",
  )
  async html(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Param('version', versionPipe) version: number,
    @Res({ passthrough: true }) res: Response,
  ): Promise<string> {
    const report = await this.ready(deskId, version);
    res.setHeader('Content-Disposition', `inline; filename="desk-${deskId}-model-${version}-report.html"`);
    return report.html!;
  }

  private async desk(deskId: number): Promise<void> {
    deskOr404(deskId, await this.reports.desk(deskId));
  }

  /** The ready report, or a 404 that says why there is none: no such version, not published, still being written, or failed. */
  private async ready(deskId: number, version: number): Promise<ModelReportEntity> {
    if (version < 1) throw new BadRequestException('version: expected a whole number from 1');
    await this.desk(deskId);
    const v = await this.reports.versionState(deskId, version);
    if (!v) throw new NotFoundException(`desk ${deskId} has no model version ${version}`);
    if (v.state !== 'published') {
      throw new NotFoundException(
        v.state === 'training' || v.state === 'scoring'
          ? `model version ${version} is still ${v.state}: its report is written once it is published`
          : `model version ${version} was never published (${v.state}), so it has no report`,
      );
    }
    const report = await this.reports.report(deskId, version);
    if (report?.state === 'ready') return report;
    if (report?.state === 'writing')
      throw new NotFoundException({
        statusCode: 404,
        message: `the report of model version ${version} is still being written; try again shortly`,
        status: 'writing',
      });
    if (report?.state === 'failed')
      throw new NotFoundException({
        statusCode: 404,
        message: `the report of model version ${version} could not be written: ${report.failure}`,
        status: 'failed',
      });
    const id = jobOptions(JOBS.writeReport, { deskId, version }).jobId!;
    const job = await this.jobs.job(JOBS.writeReport, id);
    if (job)
      throw new NotFoundException({
        statusCode: 404,
        message: `the report of model version ${version} is queued and will be written shortly`,
        status: 'writing',
      });
    throw new NotFoundException({
      statusCode: 404,
      message: `model version ${version} has no report yet`,
      status: 'missing',
    });
  }
}
