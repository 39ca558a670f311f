import { Body, Controller, Delete, Get, HttpCode, Inject, Param, ParseIntPipe, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { CurrentUser, Roles, type Principal } from '#auth';
import { StartSimulationDto } from './simulation.dto.js';
import { SimulationService } from './simulation.service.js';

/** The demo's simulated reviewer, for supervisors: start it for a few minutes, watch it, stop it. */
@ApiTags('demo')
@Controller('api/desks/:deskId/simulation')
export class SimulationController {
  constructor(@Inject(SimulationService) private readonly simulation: SimulationService) {}

  /** 202 with the new run; 409 on a desk that holds anything but generated posts, or while a run is going. */
  @Roles('supervisor')
  @Post()
  @HttpCode(202)
  start(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: StartSimulationDto,
  ) {
    // A POST without a body leaves it undefined.
    return this.simulation.start(user, deskId, (body as StartSimulationDto | undefined)?.minutes ?? 2);
  }

  @Roles('supervisor')
  @Get()
  status(@Param('deskId', ParseIntPipe) deskId: number) {
    return this.simulation.status(deskId);
  }

  @Roles('supervisor')
  @Delete()
  @HttpCode(204)
  async stop(@CurrentUser() user: Principal, @Param('deskId', ParseIntPipe) deskId: number): Promise<void> {
    await this.simulation.stop(user, deskId);
  }
}
