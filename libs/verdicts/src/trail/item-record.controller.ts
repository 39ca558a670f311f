import { Controller, Get, HttpCode, Inject, Param, ParseIntPipe, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { ItemRecordAnswer, ItemTextAnswer } from '../verdict.responses.js';
import { ItemRecordService } from './item-record.service.js';

@ApiTags('agreement')
@Controller('api')
export class ItemRecordController {
  constructor(@Inject(ItemRecordService) private readonly items: ItemRecordService) {}

  /** One item for oversight, without its text: every verdict with its draw, the settlements, each version's call. */
  @Roles('supervisor', 'auditor')
  @OnDesk('itemId')
  @Get('items/:itemId')
  @ApiAnswer(ItemRecordAnswer)
  record(@Param('itemId', ParseIntPipe) itemId: number): Promise<Answer<typeof ItemRecordAnswer>> {
    return this.items.record(itemId);
  }

  /** The item's text, for one reader: each call writes an `item.read` line to the audit trail. */
  @Roles('supervisor', 'auditor')
  @OnDesk('itemId')
  @Post('items/:itemId/read')
  @HttpCode(200)
  @ApiAnswer(ItemTextAnswer, { description: 'the text, recorded as read by the caller (null once erased)' })
  read(
    @CurrentUser() user: Principal,
    @Param('itemId', ParseIntPipe) itemId: number,
  ): Promise<Answer<typeof ItemTextAnswer>> {
    return this.items.readText(user, itemId);
  }
}
