/**
 * The screens' only way to the server: same-origin requests under /api with
 * the session cookie. Errors carry the server's own message, which the
 * screens show as it is.
 */
export type Role = 'reviewer' | 'supervisor' | 'auditor' | 'admin';
export type TriageCall = 'sure' | 'ambiguous' | 'unfamiliar';

export interface Me {
  id: number;
  name: string;
  role: Role;
}

export interface Desk {
  id: number;
  name: string;
  categories: Array<{ id: number; name: string; position: number }>;
  seedTerms: Record<string, string[]>;
  coverageTarget: number;
  calibration: 'marginal' | 'per-category';
  randomShare: number;
  leaseSeconds: number;
  strategy: string;
  score: string;
  retrainEvery: number;
  retrainAfterSeconds: number;
  currentModelVersion: number | null;
  [setting: string]: unknown;
}

export interface Prediction {
  modelVersion: number;
  probabilities: Record<string, number>;
  set: string[];
  call: TriageCall;
}

export interface Highlight {
  start: number;
  end: number;
  category: string;
  term?: string;
}

export interface LeaseGrant {
  lease: { id: string; expiresAt: string };
  item: {
    id: number;
    text: string;
    meta: Record<string, unknown>;
    externalId: string | null;
    source: string | null;
    postedAt: string | null;
  };
  highlights: Highlight[];
  prediction: Prediction | null;
}

export interface Verdict {
  id: number;
  itemId: number;
  category: string | null;
  abstain: boolean;
  createdAt: string;
  [field: string]: unknown;
}

export interface Progress {
  deskId: number;
  items: { total: number; open: number; leased: number; decided: number };
  verdicts: { total: number; byCategory: Record<string, number>; abstain: number; undone: number };
  reviewers?: Array<{ name: string; verdicts: number; lastAt: string | null }>;
  currentModelVersion: number | null;
}

export interface CalibrationStatus {
  modelVersion: number;
  target: number;
  mode: string;
  thresholds: Array<{ category: string | null; threshold: number | null; n: number; needMore: number }>;
  needMore: number;
}

export interface PreviewPoint {
  target: number;
  sureShare: number;
  ambiguousShare: number;
  unfamiliarShare: number;
  meanSetSize: number;
  calibrationCount: number;
  needMore: number;
  /** Open items by set size (index = number of categories in the set). */
  setSizes?: number[];
}

export interface CoverageSummary {
  n: number;
  covered: number;
  coverage: number | null;
  interval: { lower: number; upper: number } | null;
}

export interface Coverage {
  target: number;
  mode: string;
  byVersion: Array<CoverageSummary & { modelVersion: number; perCategory: Record<string, CoverageSummary> }>;
  window: CoverageSummary & { size: number; perCategory: Record<string, CoverageSummary> };
  alert: { raised: boolean; message: string | null };
}

export interface ModelMetrics {
  n: number;
  accuracy: number;
  macroF1: number;
  logLoss: number;
  brier: number;
  ece: number;
  reliability?: Array<{
    lower: number;
    upper: number;
    count: number;
    meanConfidence: number | null;
    accuracy: number | null;
  }>;
}

export interface ModelSummary {
  version: number;
  parentVersion: number | null;
  state: string;
  createdAt: string;
  publishedAt: string | null;
  trainingCounts: Record<string, number>;
  calibrationCounts: Record<string, number>;
  metrics: ModelMetrics | null;
  timings: Record<string, number>;
  failure: string | null;
}

export interface ImportView {
  id: string;
  state: 'receiving' | 'queued' | 'running' | 'done' | 'failed';
  fileName: string | null;
  bytesReceived: number;
  rowsRead: number;
  imported: number;
  duplicates: number;
  rejected: number;
  errors: Array<{ row: number; reason: string }>;
  failure: string | null;
  createdAt: string;
  finishedAt: string | null;
}

export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
  ) {
    super(message);
  }
}

function messageOf(body: unknown, status: number): string {
  if (body && typeof body === 'object' && 'message' in body) {
    const m = body.message;
    if (Array.isArray(m)) return m.join('; ');
    if (typeof m === 'string') return m;
  }
  return `the server answered ${status}`;
}

/** Sends a request; resolves with the parsed body (null for 204), rejects with an ApiError carrying the server's message. */
export async function api<T>(method: string, path: string, body?: unknown): Promise<T> {
  const init: RequestInit = { method, credentials: 'same-origin', headers: { accept: 'application/json' } };
  if (body !== undefined) {
    init.body = JSON.stringify(body);
    (init.headers as Record<string, string>)['content-type'] = 'application/json';
  }
  let res: Response;
  try {
    res = await fetch(`/api${path}`, init);
  } catch {
    throw new ApiError(0, 'the server cannot be reached; check the connection and try again');
  }
  if (res.status === 204) return null as T;
  const text = await res.text();
  const parsed: unknown = text ? JSON.parse(text) : null;
  if (!res.ok) {
    if (res.status === 401 && !path.startsWith('/auth/')) window.dispatchEvent(new CustomEvent('cribra:signed-out'));
    throw new ApiError(res.status, messageOf(parsed, res.status));
  }
  return parsed as T;
}

export const get = <T>(path: string) => api<T>('GET', path);
export const post = <T>(path: string, body?: unknown) => api<T>('POST', path, body ?? {});
export const patch = <T>(path: string, body: unknown) => api<T>('PATCH', path, body);

/**
 * Uploads a file as a multipart form (the server reads the format from the
 * file's name and type), reporting bytes sent; XMLHttpRequest because fetch
 * has no upload progress.
 */
export function uploadFile(
  path: string,
  file: File,
  onProgress: (sent: number, total: number) => void,
): Promise<{ importId: string }> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api${path}`);
    xhr.upload.onprogress = (e) => onProgress(e.loaded, e.total || file.size);
    xhr.onerror = () => reject(new ApiError(0, 'the upload was interrupted; nothing was imported from it'));
    xhr.onload = () => {
      const parsed: unknown = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      if (xhr.status >= 200 && xhr.status < 300) resolve(parsed as { importId: string });
      else reject(new ApiError(xhr.status, messageOf(parsed, xhr.status)));
    };
    const form = new FormData();
    form.append('file', file, file.name);
    xhr.send(form);
  });
}

/** A fresh idempotency key for a verdict. */
export const clientId = () => crypto.randomUUID();
