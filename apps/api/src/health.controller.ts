import { Controller, Get, HttpCode, Inject, ServiceUnavailableException } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { Public } from '#auth';
import { Database } from '#database';
import { JobQueueService } from '#queues';

@ApiTags('health')
@Controller()
export class HealthController {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
  ) {}

  /** The process is up. */
  @Public()
  @Get('healthz')
  @HttpCode(200)
  health() {
    return { status: 'ok' };
  }

  /** The process can serve: the database and Redis answer. */
  @Public()
  @Get('readyz')
  async ready() {
    const [database, redis] = await Promise.all([
      this.db.query(null, 'SELECT 1').then(
        () => true,
        () => false,
      ),
      this.jobs.ping(),
    ]);
    if (!database || !redis) throw new ServiceUnavailableException({ status: 'not ready', database, redis });
    return { status: 'ready', database, redis, dialect: this.db.dialect };
  }
}
