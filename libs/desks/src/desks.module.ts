import { Module } from '@nestjs/common';
import { DesksController } from './desks.controller.js';
import { DesksService } from './desks.service.js';

@Module({ controllers: [DesksController], providers: [DesksService], exports: [DesksService] })
export class DesksModule {}
