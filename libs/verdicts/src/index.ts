export { VerdictsModule } from './verdicts.module.js';
export { VerdictsService, type VerdictView } from './verdicts.service.js';
export { ProgressService, type DeskProgress } from './progress.service.js';
export { CreateVerdictDto } from './verdict.dto.js';
export { AgreementService, AGREEMENT_BOOTSTRAP_RESAMPLES, AGREEMENT_BOOTSTRAP_SEED, FLEISS_UNEQUAL_HANDLING, type DeskAgreement } from './agreement/agreement.service.js';
