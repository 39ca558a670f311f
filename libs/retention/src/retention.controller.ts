import { BadRequestException, Controller, HttpCode, Inject, Param, ParseIntPipe, Post, Query } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import { JobQueueService } from '#queues';
import { askRecount } from './recount.js';
import { RetentionRunAnswer } from './retention.responses.js';
import { RetentionService } from './retention.service.js';

const FLAGS: Record<string, boolean> = { '1': true, true: true, '0': false, false: false };

@ApiTags('retention')
@Controller('api/desks/:deskId/retention')
export class RetentionController {
  constructor(
    @Inject(RetentionService) private readonly retention: RetentionService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Applies the desk's retention periods now (the daily job does the same for every desk), or counts in a dry run. */
  @Roles('supervisor')
  @OnDesk()
  @Post('run')
  @HttpCode(200)
  @ApiAnswer(RetentionRunAnswer, {
    description: 'how many items went (or, in a dry run, would go), by category',
  })
  @ApiQuery({
    name: 'dryRun',
    required: false,
    enum: ['1', '0', 'true', 'false'],
    description: '1: only count what the periods would erase now; nothing is erased',
  })
  async run(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('dryRun') dryRun?: string,
  ): Promise<Answer<typeof RetentionRunAnswer>> {
    if (dryRun !== undefined && !(dryRun in FLAGS))
      throw new BadRequestException(`dryRun: expected 1, 0, true or false, got ${JSON.stringify(dryRun)}`);
    const run = await this.retention.run(user, deskId, { dryRun: dryRun !== undefined && FLAGS[dryRun] });
    if (!run.dryRun && run.items > 0) await askRecount(this.jobs, this.config, deskId);
    return { run };
  }
}
