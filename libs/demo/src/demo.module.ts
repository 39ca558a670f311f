import { Module } from '@nestjs/common';
import { AuthCoreModule } from '#auth';
import { DesksModule } from '#desks';
import { ImportsModule } from '#imports';
import { LeasesModule } from '#leases';
import { VerdictsModule } from '#verdicts';
import { DemoDeskService } from './demo-desk.service.js';
import { DemoSeeder } from './demo-seeder.service.js';
import { SimulatedReviewerService } from './simulated-reviewer.service.js';
import { SimulationController } from './simulation.controller.js';
import { SimulationService } from './simulation.service.js';

/** HTTP side: the simulated reviewer's routes. */
@Module({ controllers: [SimulationController], providers: [SimulationService, DemoDeskService] })
export class DemoModule {}

/**
 * Worker side: the simulated reviewer itself, working through the leases and
 * verdicts services (their modules' controllers are inert in a worker, which serves no HTTP).
 */
@Module({
  imports: [LeasesModule, VerdictsModule, AuthCoreModule],
  providers: [SimulatedReviewerService, DemoDeskService],
  exports: [SimulatedReviewerService],
})
export class DemoWorkModule {}

/** For `start`: seeding the demo on an empty service. */
@Module({ imports: [DesksModule, ImportsModule, AuthCoreModule], providers: [DemoSeeder], exports: [DemoSeeder] })
export class DemoSeedModule {}
