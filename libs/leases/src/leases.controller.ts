import {
  BadRequestException,
  Controller,
  Delete,
  Get,
  HttpCode,
  Inject,
  Param,
  ParseIntPipe,
  ParseUUIDPipe,
  Post,
  Query,
  Res,
} from '@nestjs/common';
import { ApiQuery, ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { ApiAnswer, ApiNoContent, type Answer } from '#api-docs';
import { CurrentUser, Roles, type Principal, OnDesk } from '#auth';
import { LeaseGrantAnswer, MyLeasesAnswer } from './lease.responses.js';
import { LeasesService } from './leases.service.js';

@ApiTags('queue')
@Controller('api')
export class LeasesController {
  constructor(@Inject(LeasesService) private readonly leases: LeasesService) {}

  /** The next item for the reviewer: 201 with the lease, or 204 when nothing is left. */
  @Roles('reviewer')
  @OnDesk()
  @Post('desks/:deskId/leases')
  @ApiAnswer(LeaseGrantAnswer, { status: 201, description: 'an item, held for this reviewer until the lease expires' })
  @ApiNoContent('nothing is left for this reviewer on the desk')
  async lease(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Res({ passthrough: true }) res: Response,
  ): Promise<Answer<typeof LeaseGrantAnswer> | undefined> {
    const grant = await this.leases.lease(user, deskId);
    if (!grant) {
      res.status(204);
      return;
    }
    res.status(201);
    return grant;
  }

  @Roles('reviewer')
  @OnDesk()
  @Get('desks/:deskId/leases/mine')
  @ApiAnswer(MyLeasesAnswer)
  async mine(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
  ): Promise<Answer<typeof MyLeasesAnswer>> {
    return { leases: await this.leases.mine(user, deskId) };
  }

  @Roles('reviewer')
  @OnDesk('leaseId')
  @Delete('leases/:leaseId')
  @HttpCode(204)
  @ApiNoContent('the item is back in the pool')
  @ApiQuery({
    name: 'skip',
    required: false,
    enum: ['true', 'false'],
    description:
      'true: skip the item: it goes back to the pool for others and is not served to this reviewer again for one sign-in session (SESSION_HOURS)',
  })
  async giveBack(
    @CurrentUser() user: Principal,
    @Param('leaseId', new ParseUUIDPipe()) leaseId: string,
    @Query('skip') skip?: string,
  ): Promise<void> {
    if (skip !== undefined && skip !== 'true' && skip !== 'false')
      throw new BadRequestException(`skip: expected true or false, got ${JSON.stringify(skip)}`);
    await this.leases.giveBack(user, leaseId, { skip: skip === 'true' });
  }
}
