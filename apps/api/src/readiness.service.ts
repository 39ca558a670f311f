import { Inject, Injectable } from '@nestjs/common';
import { Database, type Dialect } from '#database';
import { checkDependencies, JobQueueService } from '#queues';

/** What `/readyz` reports: whether the database and Redis answer in time, and which database this is. */
export interface Readiness {
  database: boolean;
  redis: boolean;
  dialect: Dialect;
}

/** The API's readiness: `checkDependencies` (the rule the worker's health server shares) on this process's handles. */
@Injectable()
export class ReadinessService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  async check(): Promise<Readiness> {
    return { ...(await checkDependencies(this.db, this.jobs)), dialect: this.db.dialect };
  }
}
