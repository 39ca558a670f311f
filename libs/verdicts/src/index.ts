export { VerdictsModule } from './verdicts.module.js';
export { VerdictsService, type VerdictView } from './verdicts.service.js';
export { ProgressService, type DeskProgress } from './progress.service.js';
export { CreateVerdictDto } from './verdict.dto.js';
