import { Module } from '@nestjs/common';
import { MembershipModule } from '#auth';
import { ModelsCoreModule } from '#models';
import { DesksController } from './desks.controller.js';
import { DesksService } from './desks.service.js';

@Module({
  imports: [ModelsCoreModule, MembershipModule],
  controllers: [DesksController],
  providers: [DesksService],
  exports: [DesksService],
})
export class DesksModule {}
