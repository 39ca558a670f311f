import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { ProgressService } from './progress.service.js';
import { VerdictsController } from './verdicts.controller.js';
import { VerdictsService } from './verdicts.service.js';

@Module({ imports: [ModelsCoreModule], controllers: [VerdictsController], providers: [VerdictsService, ProgressService], exports: [VerdictsService, ProgressService] })
export class VerdictsModule {}
