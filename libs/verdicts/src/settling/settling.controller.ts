import {
  BadRequestException,
  Body,
  Controller,
  Get,
  HttpCode,
  Inject,
  Param,
  ParseIntPipe,
  Post,
  Query,
} from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentUser, Roles, type Principal, OnDesk } from '#auth';
import { DisagreementListAnswer, SettledAnswer } from '../verdict.responses.js';
import { DisagreementsService } from './disagreements.service.js';
import { SettleItemDto } from './settle.dto.js';
import { SettlementsService } from './settlements.service.js';

const whole = (name: string, v: string | undefined, min: number, max: number): number | undefined => {
  if (v === undefined || v === '') return undefined;
  if (!/^\d+$/.test(v) || Number(v) < min || Number(v) > max)
    throw new BadRequestException(`${name}: expected a whole number from ${min} to ${max}`);
  return Number(v);
};

@ApiTags('agreement')
@Controller('api')
export class SettlingController {
  constructor(
    @Inject(DisagreementsService) private readonly disagreements: DisagreementsService,
    @Inject(SettlementsService) private readonly settlements: SettlementsService,
  ) {}

  /** Items reviewers disagree on, or where a verdict went against a sure call of a healthy model version; by item id, `after` the cursor. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/disagreements')
  @ApiAnswer(DisagreementListAnswer)
  @ApiQuery({ name: 'after', required: false, type: Number, description: 'the `next` of the previous page' })
  @ApiQuery({ name: 'limit', required: false, type: Number, description: 'items per page, 1–200 (default 50)' })
  list(
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('after') after?: string,
    @Query('limit') limit?: string,
  ): Promise<Answer<typeof DisagreementListAnswer>> {
    return this.disagreements.list(deskId, {
      after: whole('after', after, 0, Number.MAX_SAFE_INTEGER),
      limit: whole('limit', limit, 1, 200) ?? 50,
    });
  }

  /** The supervisor's label for an item, with a reason; the latest settlement trains and calibrates. */
  @Roles('supervisor')
  @OnDesk('itemId')
  @Post('items/:itemId/settle')
  @HttpCode(201)
  @ApiAnswer(SettledAnswer, { status: 201, description: 'the settlement is stored' })
  @ApiErrors({ 409: 'the item has no live verdict: there is nothing to settle' })
  async settle(
    @CurrentUser() user: Principal,
    @Param('itemId', ParseIntPipe) itemId: number,
    @Body() body: SettleItemDto,
  ): Promise<Answer<typeof SettledAnswer>> {
    return { settlement: await this.settlements.settle(user, itemId, body) };
  }
}
