import {
  BadRequestException,
  Body,
  Controller,
  Get,
  Inject,
  Param,
  ParseIntPipe,
  Post,
  Query,
  Res,
} from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { ApiAnswer, ApiErrors, type Answer } from '#api-docs';
import { CurrentDesk, CurrentUser, OnDesk, Roles, type DeskAccess, type Principal } from '#auth';
import { parseIsoDateTime } from '#imports';
import { CreateVerdictDto } from './verdict.dto.js';
import { ProgressService } from './progress.service.js';
import { TrailService, trailQuery } from './trail/trail.service.js';
import {
  ApiVerdictFilters,
  DeskVerdictListAnswer,
  OneVerdictAnswer,
  ProgressAnswer,
  UndoneVerdictAnswer,
  VerdictCountAnswer,
  VerdictListAnswer,
} from './verdict.responses.js';
import { VerdictsService } from './verdicts.service.js';

const intOrUndefined = (name: string, v: string | undefined, max = Number.MAX_SAFE_INTEGER): number | undefined => {
  if (v === undefined || v === '') return undefined;
  if (!/^\d+$/.test(v) || Number(v) < 1 || Number(v) > max)
    throw new BadRequestException(`${name}: expected a whole number from 1 to ${max}`);
  return Number(v);
};

/** An ISO 8601 date or date-time, as the decision-trail export reads them. */
const timeOrUndefined = (name: string, v: string | undefined): Date | undefined => {
  if (v === undefined || v === '') return undefined;
  const d = parseIsoDateTime(v);
  if (!d)
    throw new BadRequestException(
      `${name}: expected an ISO 8601 date or date-time (e.g. 2026-01-31 or 2026-01-31T12:00:00Z), got ${JSON.stringify(v)}`,
    );
  return d;
};

@ApiTags('verdicts')
@Controller('api')
export class VerdictsController {
  constructor(
    @Inject(VerdictsService) private readonly verdicts: VerdictsService,
    @Inject(ProgressService) private readonly progressService: ProgressService,
    @Inject(TrailService) private readonly trail: TrailService,
  ) {}

  /** 201 with the new verdict; 200 with the stored one when the clientId was seen before. */
  @Roles('reviewer')
  @OnDesk()
  @Post('desks/:deskId/verdicts')
  @ApiAnswer(OneVerdictAnswer, { status: 201, description: 'the verdict is stored' })
  @ApiAnswer(OneVerdictAnswer, { status: 200, description: 'this clientId was stored before: the stored verdict' })
  @ApiErrors({ 409: 'the lease was closed or taken over, or this reviewer already decided the item' })
  async create(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: CreateVerdictDto,
    @Res({ passthrough: true }) res: Response,
  ): Promise<Answer<typeof OneVerdictAnswer>> {
    const { verdict, replayed } = await this.verdicts.submit(user, deskId, body);
    res.status(replayed ? 200 : 201);
    return { verdict };
  }

  @Roles('reviewer')
  @OnDesk('verdictId')
  @Post('verdicts/:verdictId/undo')
  @ApiAnswer(UndoneVerdictAnswer, { status: 201, description: 'the verdict, marked undone' })
  @ApiErrors({ 409: 'already undone, past the undo window, or not this reviewer’s last verdict' })
  @ApiQuery({
    name: 'reopen',
    required: false,
    enum: ['true', 'false'],
    description: 'true: lease the same item again to this reviewer at once, to correct the verdict',
  })
  async undo(
    @CurrentUser() user: Principal,
    @Param('verdictId', ParseIntPipe) verdictId: number,
    @Query('reopen') reopen?: string,
  ): Promise<Answer<typeof UndoneVerdictAnswer>> {
    if (reopen !== undefined && reopen !== 'true' && reopen !== 'false')
      throw new BadRequestException(`reopen: expected true or false, got ${JSON.stringify(reopen)}`);
    const { verdict, lease } = await this.verdicts.undo(user, verdictId, { reopen: reopen === 'true' });
    return reopen === 'true' ? { verdict, lease } : { verdict };
  }

  /** How many verdicts the signed-in reviewer gave on a desk since a moment (the screen asks for its local midnight). */
  @Roles('reviewer')
  @OnDesk()
  @Get('desks/:deskId/verdicts/mine/count')
  @ApiAnswer(VerdictCountAnswer)
  @ApiQuery({ name: 'since', required: true, type: String, description: 'an ISO 8601 date-time' })
  async countMine(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('since') since: string,
  ): Promise<Answer<typeof VerdictCountAnswer>> {
    const from = timeOrUndefined('since', since);
    if (!from) throw new BadRequestException('since: required, an ISO 8601 date-time');
    return { since: from, count: await this.verdicts.countMine(user, deskId, from) };
  }

  /** Every reviewer's verdicts on a desk: for supervisors and auditors only. */
  @Roles('supervisor', 'auditor')
  @OnDesk()
  @Get('desks/:deskId/verdicts')
  @ApiAnswer(DeskVerdictListAnswer)
  @ApiVerdictFilters()
  @ApiQuery({ name: 'before', required: false, type: Number, description: 'a verdict id: the page before it' })
  @ApiQuery({ name: 'limit', required: false, type: Number, description: 'verdicts per page, 1–1000 (default 100)' })
  async list(
    @Param('deskId', ParseIntPipe) deskId: number,
    // Typed `string | undefined`, not `?: string`: validation would turn a repeated key into one joined string.
    @Query('before') before: string | undefined,
    @Query('limit') limit: string | undefined,
    @Query('reviewer') reviewer: string | undefined,
    @Query('reviewerMatch') reviewerMatch: string | undefined,
    @Query('category') category: string | undefined,
    @Query('from') from: string | undefined,
    @Query('to') to: string | undefined,
  ): Promise<Answer<typeof DeskVerdictListAnswer>> {
    // The trail's filters, checked the same way (400 on an unknown category, a bad or repeated one); `from`
    // inclusive, `to` exclusive. A reviewer that does not exist matches nothing, as in the trail.
    const pageBefore = intOrUndefined('before', before);
    const pageLimit = intOrUndefined('limit', limit, 1000) ?? 100;
    const filter = await this.trail.filter(deskId, trailQuery({ reviewer, reviewerMatch, category, from, to }));
    if (filter.reviewerId === null) return { verdicts: [] };
    return { verdicts: await this.verdicts.listForOversight(filter, { before: pageBefore, limit: pageLimit }) };
  }

  /** The signed-in reviewer's own verdicts on a desk, newest first. */
  @Roles('reviewer')
  @OnDesk()
  @Get('desks/:deskId/verdicts/mine')
  @ApiAnswer(VerdictListAnswer)
  @ApiQuery({ name: 'limit', required: false, type: Number, description: 'verdicts, 1–1000 (default 20)' })
  async mine(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Query('limit') limit?: string,
  ): Promise<Answer<typeof VerdictListAnswer>> {
    return {
      verdicts: await this.verdicts.listForDesk(
        { deskId, reviewerId: user.id },
        { limit: intOrUndefined('limit', limit, 1000) ?? 20 },
      ),
    };
  }

  @Roles('reviewer', 'supervisor', 'auditor', 'admin')
  @OnDesk()
  @Get('desks/:deskId/progress')
  @ApiAnswer(ProgressAnswer)
  progress(
    @CurrentDesk() desk: DeskAccess,
    @Param('deskId', ParseIntPipe) deskId: number,
  ): Promise<Answer<typeof ProgressAnswer>> {
    return this.progressService.progress(deskId, desk.role === 'supervisor' || desk.role === 'auditor');
  }
}
