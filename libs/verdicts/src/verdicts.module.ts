import { Module } from '@nestjs/common';
import { DeskDirectoryModule } from '#desks';
import { ProgressService } from './progress.service.js';
import { VerdictsController } from './verdicts.controller.js';
import { VerdictsService } from './verdicts.service.js';

@Module({ imports: [DeskDirectoryModule], controllers: [VerdictsController], providers: [VerdictsService, ProgressService], exports: [VerdictsService, ProgressService] })
export class VerdictsModule {}
