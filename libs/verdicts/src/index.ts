export { VerdictsModule } from './verdicts.module.js';
export { VerdictsService, SECOND_OPINION_RANDOM, type VerdictView } from './verdicts.service.js';
export { ProgressService, type DeskProgress } from './progress.service.js';
export { CreateVerdictDto } from './verdict.dto.js';
export {
  AgreementService,
  AGREEMENT_BOOTSTRAP_RESAMPLES,
  AGREEMENT_BOOTSTRAP_SEED,
  FLEISS_UNEQUAL_HANDLING,
  type DeskAgreement,
} from './agreement/agreement.service.js';
export { SettlementsService, type SettlementView } from './settling/settlements.service.js';
export { DisagreementsService, type Disagreement, type DisagreementReason } from './settling/disagreements.service.js';
export { SettleItemDto } from './settling/settle.dto.js';
export { TrailService, TRAIL_PAGE_SIZE } from './trail/trail.service.js';
export { TRAIL_COLUMNS, type TrailRow } from './trail/trail-format.js';
export { AgreementAnswer } from './verdict.responses.js';
export { EscalationsService, type UrgentItem } from './escalation/escalations.service.js';
export { EscalationWorkModule, UrgentNotifier, WebhookDeliveryError } from './escalation/urgent-notifier.service.js';
