import { Inject, Injectable } from '@nestjs/common';
import type { Job } from 'bullmq';
import { JOBS, type JobHandler, type WriteReportPayload } from '#queues';
import { ReportWriter } from '#reports';

@Injectable()
export class WriteReportProcessor implements JobHandler<'write-report'> {
  readonly jobName = JOBS.writeReport;
  constructor(@Inject(ReportWriter) private readonly writer: ReportWriter) {}

  handle(job: Job<WriteReportPayload>): Promise<unknown> {
    return this.writer.write(job.data);
  }
}
