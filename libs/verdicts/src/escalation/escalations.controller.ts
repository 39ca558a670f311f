import { Controller, Get, HttpCode, Inject, Param, ParseIntPipe, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { AcknowledgedAnswer, UrgentListAnswer } from './escalation.responses.js';
import { EscalationsService } from './escalations.service.js';

@ApiTags('verdicts')
@Controller('api')
export class EscalationsController {
  constructor(@Inject(EscalationsService) private readonly escalations: EscalationsService) {}

  /** Items reviewers marked urgent that no supervisor has acknowledged yet, the most recent first. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/urgent')
  @ApiAnswer(UrgentListAnswer)
  urgent(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof UrgentListAnswer>> {
    return this.escalations.waiting(deskId);
  }

  /** A supervisor has seen the item: every waiting escalation of it is acknowledged (audited). */
  @Roles('supervisor')
  @OnDesk('itemId')
  @Post('items/:itemId/acknowledge')
  @HttpCode(200)
  @ApiAnswer(AcknowledgedAnswer, { description: 'the item’s waiting escalations are acknowledged' })
  @ApiErrors({ 404: 'the item was never marked urgent', 409: 'the item is acknowledged already: nothing waits' })
  acknowledge(
    @CurrentUser() user: Principal,
    @Param('itemId', ParseIntPipe) itemId: number,
  ): Promise<Answer<typeof AcknowledgedAnswer>> {
    return this.escalations.acknowledge(user, itemId);
  }
}
