import { Controller, Get, HttpCode, Inject, ServiceUnavailableException } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { Public } from '#auth';
import { HealthAnswer, ReadyAnswer } from './api.responses.js';
import { ReadinessService } from './readiness.service.js';

@ApiTags('health')
@Controller()
export class HealthController {
  constructor(@Inject(ReadinessService) private readonly readiness: ReadinessService) {}

  /** The process is up. */
  @Public()
  @Get('healthz')
  @HttpCode(200)
  @ApiAnswer(HealthAnswer)
  health(): Answer<typeof HealthAnswer> {
    return { status: 'ok' };
  }

  /**
   * The process can serve: the database and Redis answer, each within 0.4 s (`checkDependencies`), so that
   * a load balancer hears 503 within a second when either is gone instead of waiting on a command that never returns.
   */
  @Public()
  @Get('readyz')
  @ApiAnswer(ReadyAnswer)
  @ApiErrors({ 503: 'the database or Redis does not answer; the body says which' })
  async ready(): Promise<Answer<typeof ReadyAnswer>> {
    const { database, redis, dialect } = await this.readiness.check();
    if (!database || !redis) throw new ServiceUnavailableException({ status: 'not ready', database, redis });
    return { status: 'ready', database: true, redis: true, dialect };
  }
}
