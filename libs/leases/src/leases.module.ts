import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { HighlightService } from './highlight.service.js';
import { LeasesController } from './leases.controller.js';
import { LEASE_RANDOM, LeasesService } from './leases.service.js';

@Module({
  imports: [ModelsCoreModule],
  controllers: [LeasesController],
  providers: [LeasesService, HighlightService, { provide: LEASE_RANDOM, useValue: Math.random }],
  exports: [LeasesService, HighlightService],
})
export class LeasesModule {}
