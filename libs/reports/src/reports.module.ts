import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { AgreementService } from '#verdicts';
import { ReportData } from './report-data.service.js';
import { ReportsController } from './reports.controller.js';
import { ReportWriter } from './report-writer.service.js';
import { ReportsRepository } from './reports.repository.js';

/** The HTTP side: serving stored reports. Writing happens in the worker. */
@Module({ controllers: [ReportsController], providers: [ReportsRepository] })
export class ReportsModule {}

/** The worker side: gathering the figures and writing the report files. */
@Module({
  imports: [ModelsCoreModule],
  providers: [AgreementService, ReportsRepository, ReportData, ReportWriter],
  exports: [ReportWriter],
})
export class ReportsWorkModule {}
