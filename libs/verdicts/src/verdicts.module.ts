import { Module } from '@nestjs/common';
import { ModelsCoreModule } from '#models';
import { AgreementController } from './agreement/agreement.controller.js';
import { AgreementService } from './agreement/agreement.service.js';
import { ProgressService } from './progress.service.js';
import { VerdictsController } from './verdicts.controller.js';
import { VerdictsService } from './verdicts.service.js';

@Module({ imports: [ModelsCoreModule], controllers: [VerdictsController, AgreementController], providers: [VerdictsService, ProgressService, AgreementService], exports: [VerdictsService, ProgressService, AgreementService] })
export class VerdictsModule {}
