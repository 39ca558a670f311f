export { DemoModule, DemoSeedModule, DemoWorkModule } from './demo.module.js';
export { DemoDeskService, type DemoAvailability } from './demo-desk.service.js';
export {
  DEMO_ACCOUNTS,
  DEMO_DESK_NAME,
  DemoSeeder,
  formatDemoBlock,
  type DemoSeedResult,
} from './demo-seeder.service.js';
export {
  SimulationService,
  verdictsSoFar,
  type SimulationOutcome,
  type SimulationRun,
  type SimulationState,
  type SimulationStatus,
} from './simulation.service.js';
export { SIMULATED_REVIEWER, SimulatedReviewerService } from './simulated-reviewer.service.js';
export * from './pool/index.js';
