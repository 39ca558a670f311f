import { Module } from '@nestjs/common';
import { LeasesModule } from '#leases';
import { ModelsCoreModule } from '#models';
import { AgreementController } from './agreement/agreement.controller.js';
import { AgreementService } from './agreement/agreement.service.js';
import { EscalationsController } from './escalation/escalations.controller.js';
import { EscalationsService } from './escalation/escalations.service.js';
import { DisagreementsService } from './settling/disagreements.service.js';
import { SettlementsService } from './settling/settlements.service.js';
import { SettlingController } from './settling/settling.controller.js';
import { ItemRecordController } from './trail/item-record.controller.js';
import { ItemRecordService } from './trail/item-record.service.js';
import { TrailController } from './trail/trail.controller.js';
import { TrailService } from './trail/trail.service.js';
import { ProgressService } from './progress.service.js';
import { VerdictsController } from './verdicts.controller.js';
import { SECOND_OPINION_RANDOM, VerdictsService } from './verdicts.service.js';

@Module({
  imports: [ModelsCoreModule, LeasesModule],
  controllers: [
    VerdictsController,
    AgreementController,
    SettlingController,
    TrailController,
    EscalationsController,
    ItemRecordController,
  ],
  providers: [
    VerdictsService,
    ProgressService,
    AgreementService,
    SettlementsService,
    DisagreementsService,
    TrailService,
    ItemRecordService,
    EscalationsService,
    { provide: SECOND_OPINION_RANDOM, useValue: Math.random },
  ],
  exports: [VerdictsService, ProgressService, AgreementService, SettlementsService, DisagreementsService],
})
export class VerdictsModule {}
