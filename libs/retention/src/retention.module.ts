import { Module } from '@nestjs/common';
import { DeskFeaturesModule, ModelsCoreModule } from '#models';
import { ErasureService } from './erasure.service.js';
import { ErasuresController } from './erasures.controller.js';
import { RetentionClock } from './retention-clock.js';
import { RetentionController } from './retention.controller.js';
import { RetentionRepository } from './retention.repository.js';
import { RetentionService } from './retention.service.js';
import { SubjectController } from './subject.controller.js';
import { SubjectService } from './subject.service.js';

const services = [RetentionRepository, ErasureService, RetentionService, RetentionClock];

/** Erasure and retention without HTTP: the worker's daily run and the `cribra retention` command (database only). */
@Module({ imports: [DeskFeaturesModule], providers: services, exports: services })
export class RetentionCoreModule {}

/** Erasure of items: on a supervisor's request, and (built on it) by the desks' retention periods. */
@Module({
  imports: [RetentionCoreModule, ModelsCoreModule],
  controllers: [ErasuresController, RetentionController, SubjectController],
  providers: [SubjectService],
  exports: [RetentionCoreModule],
})
export class RetentionModule {}
