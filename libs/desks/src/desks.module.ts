import { Module } from '@nestjs/common';
import { DeskDirectory } from './desk-directory.service.js';
import { DesksController } from './desks.controller.js';
import { DesksService } from './desks.service.js';

/** The desk directory alone, for modules that read desks on hot paths. One instance per process. */
@Module({ providers: [DeskDirectory], exports: [DeskDirectory] })
export class DeskDirectoryModule {}

@Module({ imports: [DeskDirectoryModule], controllers: [DesksController], providers: [DesksService], exports: [DesksService, DeskDirectoryModule] })
export class DesksModule {}
