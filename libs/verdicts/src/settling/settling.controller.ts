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
import { ApiTags } from '@nestjs/swagger';
import { CurrentUser, Roles, type Principal } from '#auth';
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
  @Get('desks/:deskId/disagreements')
  list(@Param('deskId', ParseIntPipe) deskId: number, @Query('after') after?: string, @Query('limit') limit?: string) {
    return this.disagreements.list(deskId, {
      after: whole('after', after, 0, Number.MAX_SAFE_INTEGER),
      limit: whole('limit', limit, 1, 200) ?? 50,
    });
  }

  /** The supervisor's label for an item, with a reason; the latest settlement trains and calibrates. */
  @Roles('supervisor')
  @Post('items/:itemId/settle')
  @HttpCode(201)
  async settle(
    @CurrentUser() user: Principal,
    @Param('itemId', ParseIntPipe) itemId: number,
    @Body() body: SettleItemDto,
  ) {
    return { settlement: await this.settlements.settle(user, itemId, body) };
  }
}
