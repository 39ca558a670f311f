import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { ErasureService } from './erasure.service.js';
import { ErasuresController } from './erasures.controller.js';

/** Erasure of items: on a supervisor's request, and (built on it) by the desks' retention periods. */
@Module({
  imports: [ModelsCoreModule],
  controllers: [ErasuresController],
  providers: [ErasureService],
  exports: [ErasureService],
})
export class RetentionModule {}
