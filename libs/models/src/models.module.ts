import { Module, type DynamicModule } from '@nestjs/common';
import { DeskFeaturesService } from './desk-features.service.js';
import { ModelStore } from './model-store.service.js';
import { ModelsController } from './models.controller.js';
import { ModelVersionsRepository } from './model-versions.repository.js';
import { PredictionsExportController } from './predictions-export.controller.js';
import { PredictionsService } from './predictions.service.js';
import { PublishService } from './publish.service.js';
import { RetrainScheduler } from './retrain-scheduler.service.js';
import { ScoringService } from './scoring.service.js';
import { ScreeningCache } from './screening/screening-cache.service.js';
import { ScreeningRepository } from './screening/screening.repository.js';
import { PrevalenceController } from './screening/prevalence.controller.js';
import { PrevalenceService } from './screening/prevalence.service.js';
import { ScreenLaneService } from './screening/screen-lane.service.js';
import { ScreeningService } from './screening/screening.service.js';
import { ModelTransferService } from './transfer/model-transfer.service.js';
import { PAUSE_HOOK, TrainingService, type PauseHook } from './training.service.js';

/** The desk's document frequencies alone: needs the database only (no Redis), so operator commands can use it. */
@Module({ providers: [DeskFeaturesService], exports: [DeskFeaturesService] })
export class DeskFeaturesModule {}

// The screening cache and the prevalence are shared: the API serves them, the worker's reports state the prevalence.
const shared = [
  ModelStore,
  ModelVersionsRepository,
  PredictionsService,
  RetrainScheduler,
  ScreenLaneService,
  ScreeningRepository,
  ScreeningCache,
  PrevalenceService,
  ModelTransferService,
];

/** Reading models and predictions (and asking for retrains): no training here. */
@Module({ imports: [DeskFeaturesModule], providers: shared, exports: [DeskFeaturesModule, ...shared] })
export class ModelsCoreModule {}

/** The HTTP side: model versions, coverage, preview, items with predictions. */
@Module({
  imports: [ModelsCoreModule],
  controllers: [ModelsController, PredictionsExportController, PrevalenceController],
  providers: [ScreeningService],
  exports: [ModelsCoreModule],
})
export class ModelsModule {}

/** The worker side: training, scoring, publishing. `pause` is the crash tests' hook; it does nothing by default. */
@Module({})
export class ModelsWorkModule {
  static register(options: { pause?: PauseHook } = {}): DynamicModule {
    return {
      module: ModelsWorkModule,
      imports: [ModelsCoreModule],
      providers: [
        TrainingService,
        ScoringService,
        PublishService,
        { provide: PAUSE_HOOK, useValue: options.pause ?? (() => Promise.resolve()) },
      ],
      exports: [ModelsCoreModule, TrainingService, ScoringService, PublishService],
    };
  }
}
