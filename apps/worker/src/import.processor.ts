import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { ImportRunner, ReseedService } from '#imports';
import { JOBS, type CountTermsPayload, type ImportFilePayload, type JobHandler, type ReseedDeskPayload } from '#queues';
import { TermStatisticsService } from '#vocabulary';

@Injectable()
export class ImportFileProcessor implements JobHandler<'import-file'> {
  readonly jobName = JOBS.importFile;
  constructor(@Inject(ImportRunner) private readonly runner: ImportRunner) {}

  async handle(job: Job<ImportFilePayload>): Promise<unknown> {
    const done = await this.runner.run(job.data.importId, (rows) => job.updateProgress({ rows }));
    return { imported: done.imported, duplicates: done.duplicates, rejected: done.rejected };
  }
}

@Injectable()
export class ReseedDeskProcessor implements JobHandler<'reseed-desk'> {
  readonly jobName = JOBS.reseedDesk;
  constructor(@Inject(ReseedService) private readonly reseed: ReseedService) {}

  async handle(job: Job<ReseedDeskPayload>): Promise<unknown> {
    return { updated: await this.reseed.run(job.data.deskId) };
  }
}

@Injectable()
export class CountTermsProcessor implements JobHandler<'count-terms'> {
  readonly jobName = JOBS.countTerms;
  constructor(@Inject(TermStatisticsService) private readonly terms: TermStatisticsService) {}

  async handle(job: Job<CountTermsPayload>): Promise<unknown> {
    return (await this.terms.run(job.data.deskId)) ?? { desk: 'gone' };
  }
}
