import { Body, Controller, Get, HttpCode, Inject, Param, ParseIntPipe, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import { JobQueueService } from '#queues';
import { EraseItemsDto } from './erasure.dto.js';
import { ErasureService } from './erasure.service.js';
import { askRecount } from './recount.js';
import { ErasureListAnswer, OneErasureAnswer } from './retention.responses.js';

@ApiTags('retention')
@Controller('api/desks/:deskId/erasures')
export class ErasuresController {
  constructor(
    @Inject(ErasureService) private readonly erasure: ErasureService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  /** Erases, at once, every item of the desk with one of the external ids or sources, or one of the item ids. */
  @Roles('supervisor')
  @OnDesk()
  @Post()
  @HttpCode(201)
  @ApiAnswer(OneErasureAnswer, {
    status: 201,
    description: 'the matching items are erased (tombstones remain); the answer counts them',
  })
  async create(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: EraseItemsDto,
  ): Promise<Answer<typeof OneErasureAnswer>> {
    const erasure = await this.erasure.request(user, deskId, body);
    if (erasure.erased > 0) await askRecount(this.jobs, this.config, deskId);
    return { erasure };
  }

  /** The desk's erasures, on request and by retention, newest first. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get()
  @ApiAnswer(ErasureListAnswer)
  async list(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof ErasureListAnswer>> {
    return { erasures: await this.erasure.list(deskId) };
  }
}
