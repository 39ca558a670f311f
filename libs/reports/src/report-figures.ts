import type { DeskAgreement } from '#verdicts';

/**
 * The figures of an oversight report: what the JSON file holds and the only
 * input of the HTML page. Times are ISO 8601 (UTC) text; shares are in 0…1.
 */
export interface ReportFigures {
  format: 'cribra-model-report';
  formatVersion: 1;
  desk: { id: number; name: string; categories: string[] };
  version: {
    version: number;
    parentVersion: number | null;
    createdAt: string;
    publishedAt: string;
    verdictWatermark: number;
    /** Present when the desk's first version was another desk's version (POST /api/desks with startFrom). */
    startedFrom?: { deskId: number; deskName: string; version: number; untrained: string[] };
  };
  /** Verdict times covered: after the parent version was published (or from the desk's creation) up to this version's publication. */
  period: { from: string; to: string; startsAt: 'parent-published' | 'desk-created' };
  /** Settings in force when this version was published (read back from the audit trail). */
  settings: {
    coverageTarget: number;
    calibration: 'marginal' | 'per-category';
    score: 'lac' | 'aps';
    strategy: string;
    randomShare: number;
    secondOpinionShare: number;
  };
  training: VerdictCounts;
  calibration: VerdictCounts;
  coverage: CoverageSection;
  pool: PoolSection | null;
  quality: QualitySection | null;
  learningCurve: LearningPoint[];
  /** Agreement between reviewers over the desk's verdicts as they stood at publication (AgreementService). */
  agreement: DeskAgreement;
  activity: ActivitySection;
  alerts: AlertSection;
  settingsChanges: SettingsChange[];
  /**
   * Each category's share of the items posted each week, with its 95 %
   * interval, as computed when the report was first written under this
   * version (kept on later writings); null when another version was current
   * by then.
   */
  prevalence: PrevalenceSection | null;
}

/** Prevalence by week of posting (the figures of `GET /prevalence?period=week`). */
export interface PrevalenceSection {
  /** When the figures were computed: the desk's items and verdicts as they stood then. */
  asOf: string;
  modelVersion: number | null;
  period: 'day' | 'week' | 'month';
  by: 'posted' | 'imported';
  method: string;
  approximation: string;
  /** Items without a posted time, left out. */
  undated: number;
  periods: Array<{
    start: string;
    items: number;
    randomVerdicts: number;
    decided: number;
    perCategory: Array<{
      category: string;
      share: number | null;
      lower: number;
      upper: number;
      method: 'ppi++' | 'clopper-pearson' | 'none' | 'exact';
      randomVerdicts: number;
    }>;
  }>;
}

export interface VerdictCounts {
  total: number;
  perCategory: Array<{ category: string; verdicts: number }>;
  /** Items per draw kind. */
  draws: Record<string, number>;
}

export interface Interval {
  lower: number;
  upper: number;
}

/** Share of random checks whose reviewer's category was in the set shown, with two 95 % intervals. */
export interface CoverageFigure {
  checks: number;
  covered: number;
  coverage: number | null;
  wilson: Interval | null;
  clopperPearson: Interval | null;
}

export interface CoverageSection {
  /** The coverage target promised (in force at publication). */
  promised: number;
  mode: 'marginal' | 'per-category';
  /** Versions whose sets were shown with the random checks of the period. */
  checkedVersions: number[];
  overall: CoverageFigure;
  perCategory: Array<{ category: string } & CoverageFigure>;
}

export interface PoolSection {
  /** Items scored under this version (the open pool when it was scored). */
  items: number;
  meanSetSize: number;
  /** Items per prediction-set size 0…k. */
  setSizes: Array<{ size: number; items: number; share: number }>;
  calls: Record<'sure' | 'ambiguous' | 'unfamiliar', { items: number; share: number }>;
}

export interface QualitySection {
  calibrationItems: number;
  accuracy: number;
  macroF1: number;
  logLoss: number;
  brier: number;
  ece: number;
  reliability: Array<{
    lower: number;
    upper: number;
    count: number;
    meanConfidence: number | null;
    accuracy: number | null;
  }>;
}

export interface LearningPoint {
  version: number;
  publishedAt: string;
  calibrationItems: number;
  macroF1: number | null;
  accuracy: number | null;
}

export interface ActivitySection {
  /** Always `name`: people are listed by name, never ranked. */
  order: 'name';
  verdicts: number;
  reviewers: Array<{ name: string; verdicts: number; abstained: number; medianSeconds: number | null }>;
}

export interface AlertEpisode {
  raisedAt: string;
  clearedAt: string | null;
  /** The window when the alert was raised: checks, coverage and the Wilson upper bound, against the target then in force. */
  checks: number;
  coverage: number;
  upper: number;
  target: number;
}

export interface AlertSection {
  /** Random checks per window (as on the coverage page). */
  window: number;
  raisedAtEnd: boolean;
  episodes: AlertEpisode[];
}

export interface SettingsChange {
  at: string;
  actor: string;
  before: Record<string, unknown>;
  after: Record<string, unknown>;
}
