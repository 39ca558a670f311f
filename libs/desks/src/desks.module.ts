import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { DesksController } from './desks.controller.js';
import { DesksService } from './desks.service.js';

@Module({
  imports: [ModelsCoreModule],
  controllers: [DesksController],
  providers: [DesksService],
  exports: [DesksService],
})
export class DesksModule {}
