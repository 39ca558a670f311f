import { BadRequestException, Controller, Get, Inject, Param, ParseIntPipe, Query, Res } from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { ApiAnswer, type Answer } from '#api-docs';
import { CurrentUser, OnDesk, Roles, type Principal } from '#auth';
import { SubjectAnswer } from './retention.responses.js';
import { SubjectService } from './subject.service.js';

@ApiTags('retention')
@Controller('api/desks/:deskId/subject')
export class SubjectController {
  constructor(@Inject(SubjectService) private readonly subject: SubjectService) {}

  /**
   * Everything the desk holds about one external id or one source: items (tombstones for erased ones), verdicts,
   * settlements and stored predictions. The read is audited. `download=1` answers it as a file to save.
   */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get()
  @ApiAnswer(SubjectAnswer, {
    description: 'every item held for the subject, with its verdicts, settlements and predictions',
  })
  @ApiQuery({ name: 'externalId', required: false, type: String, description: 'the external id (give this or source)' })
  @ApiQuery({ name: 'source', required: false, type: String, description: 'the source (give this or externalId)' })
  @ApiQuery({ name: 'download', required: false, enum: ['1', '0'], description: '1: as an attachment to save' })
  async get(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Res({ passthrough: true }) res: Response,
    @Query('externalId') externalId?: string,
    @Query('source') source?: string,
    @Query('download') download?: string,
  ): Promise<Answer<typeof SubjectAnswer>> {
    if (download !== undefined && download !== '1' && download !== '0')
      throw new BadRequestException(`download: expected 1 or 0, got ${JSON.stringify(download)}`);
    const selector = SubjectService.selector(externalId, source);
    const answer = await this.subject.export(user, deskId, selector);
    const stamp = answer.at.toISOString().slice(0, 19).replace(/[-:]/g, '');
    res.setHeader(
      'Content-Disposition',
      `${download === '1' ? 'attachment' : 'inline'}; filename="desk-${deskId}-subject-${stamp}.json"`,
    );
    res.setHeader('Cache-Control', 'no-store');
    return answer;
  }
}
