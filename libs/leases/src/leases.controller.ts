import {
  Controller,
  Delete,
  Get,
  HttpCode,
  Inject,
  Param,
  ParseIntPipe,
  ParseUUIDPipe,
  Post,
  Res,
} from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import type { Response } from 'express';
import { CurrentUser, Roles, type Principal } from '#auth';
import { LeasesService } from './leases.service.js';

@ApiTags('queue')
@Controller('api')
export class LeasesController {
  constructor(@Inject(LeasesService) private readonly leases: LeasesService) {}

  /** The next item for the reviewer: 201 with the lease, or 204 when nothing is left. */
  @Roles('reviewer')
  @Post('desks/:deskId/leases')
  async lease(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Res({ passthrough: true }) res: Response,
  ) {
    const grant = await this.leases.lease(user, deskId);
    if (!grant) {
      res.status(204);
      return;
    }
    res.status(201);
    return grant;
  }

  @Roles('reviewer')
  @Get('desks/:deskId/leases/mine')
  async mine(@CurrentUser() user: Principal, @Param('deskId', ParseIntPipe) deskId: number) {
    return { leases: await this.leases.mine(user, deskId) };
  }

  @Roles('reviewer')
  @Delete('leases/:leaseId')
  @HttpCode(204)
  async giveBack(
    @CurrentUser() user: Principal,
    @Param('leaseId', new ParseUUIDPipe()) leaseId: string,
  ): Promise<void> {
    await this.leases.giveBack(user, leaseId);
  }
}
