import { Body, Controller, Delete, Get, HttpCode, Inject, Param, ParseIntPipe, Post } from '@nestjs/common';
import { ApiTags } from '@nestjs/swagger';
import { ApiAnswer, ApiErrors, ApiNoContent, type Answer } from '#api-docs';
import { CurrentUser, Roles, type Principal, OnDesk } from '#auth';
import { StartSimulationDto } from './simulation.dto.js';
import { SimulationRunAnswer, SimulationStatusAnswer } from './simulation.responses.js';
import { SimulationService } from './simulation.service.js';

/** The demo's simulated reviewer, for supervisors: start it for a few minutes, watch it, stop it. */
@ApiTags('demo')
@Controller('api/desks/:deskId/simulation')
export class SimulationController {
  constructor(@Inject(SimulationService) private readonly simulation: SimulationService) {}

  /** 202 with the new run; 409 on a desk that holds anything but generated posts, or while a run is going. */
  @Roles('supervisor')
  @OnDesk()
  @Post()
  @HttpCode(202)
  @ApiAnswer(SimulationRunAnswer, { status: 202, description: 'the run has started' })
  @ApiErrors({
    409: 'the desk holds other items than the demo posts, or a run is already going (its state in the body)',
  })
  start(
    @CurrentUser() user: Principal,
    @Param('deskId', ParseIntPipe) deskId: number,
    @Body() body: StartSimulationDto,
  ): Promise<Answer<typeof SimulationRunAnswer>> {
    // A POST without a body leaves it undefined.
    return this.simulation.start(user, deskId, (body as StartSimulationDto | undefined)?.minutes ?? 2);
  }

  @Roles('supervisor')
  @OnDesk()
  @Get()
  @ApiAnswer(SimulationStatusAnswer)
  status(@Param('deskId', ParseIntPipe) deskId: number): Promise<Answer<typeof SimulationStatusAnswer>> {
    return this.simulation.status(deskId);
  }

  @Roles('supervisor')
  @OnDesk()
  @Delete()
  @HttpCode(204)
  @ApiNoContent('the run has stopped')
  async stop(@CurrentUser() user: Principal, @Param('deskId', ParseIntPipe) deskId: number): Promise<void> {
    await this.simulation.stop(user, deskId);
  }
}
