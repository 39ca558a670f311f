/**
 * The screens' only way to the server: same-origin requests under /api with
 * the session cookie. Errors carry the server's own message, which the
 * screens show as it is.
 */
import type { components } from './generated/api-schema';

/*
 * The answers' types come from the API document (`npm run build` writes it and generates
 * `generated/api-schema.ts` with openapi-typescript), so a screen cannot read a field the server does not send.
 * Times are ISO 8601 strings here.
 */
type Schemas = components['schemas'];

/** The signed-in account as the screens know it: the sign-in answer's user (GET /auth/me says more). */
export type Me = Schemas['SignedIn']['user'];
export type Role = Me['role'];
export type Desk = Schemas['Desk'];
export type DeskList = Schemas['DeskList'];
export type UpdatedDesk = Schemas['UpdatedDesk'];
export type Prediction = Schemas['Prediction'];
export type TriageCall = Prediction['call'];
export type LeaseGrant = Schemas['LeaseGrant'];
export type Highlight = LeaseGrant['highlights'][number];
export type MyLeases = Schemas['MyLeases'];
export type Verdict = Schemas['Verdict'];
export type OneVerdict = Schemas['OneVerdict'];
export type UndoneVerdict = Schemas['UndoneVerdict'];
export type VerdictCount = Schemas['VerdictCount'];
export type VerdictList = Schemas['VerdictList'];
export type DeskVerdict = Schemas['DeskVerdict'];
export type DeskVerdictList = Schemas['DeskVerdictList'];
export type ItemRecord = Schemas['ItemRecord'];
export type ItemText = Schemas['ItemText'];
export type Progress = Schemas['Progress'];
export type CalibrationStatus = Schemas['CalibrationStatus'];
export type CoveragePreview = Schemas['CoveragePreview'];
export type PreviewPoint = CoveragePreview['points'][number];
export type Coverage = Schemas['Coverage'];
export type CoverageSummary = Coverage['window']['perCategory'][string];
export type ModelSummary = Schemas['ModelSummary'];
export type ModelMetrics = NonNullable<ModelSummary['metrics']>;
export type ModelList = Schemas['ModelList'];
export type ModelVersion = Schemas['ModelVersion'];
export type ImportView = Schemas['Import'];
export type ImportList = Schemas['ImportList'];
export type ImportStarted = Schemas['ImportStarted'];
export type SignedIn = Schemas['SignedIn'];
export type SimulationStatus = Schemas['SimulationStatus'];
export type SimulationRun = Schemas['SimulationRun'];
export type Agreement = Schemas['Agreement'];
export type DisagreementList = Schemas['DisagreementList'];
export type Disagreement = DisagreementList['disagreements'][number];
export type Settlement = Schemas['Settlement'];
export type ReportList = Schemas['ReportList'];
export type PredictedItems = Schemas['PredictedItems'];
export type TermSuggestions = Schemas['TermSuggestions'];
export type TermSuggestion = TermSuggestions['similar'][number];
export type TermDecision = Schemas['TermDecision'];
export type UrgentList = Schemas['UrgentList'];
export type Prevalence = Schemas['Prevalence'];
export type KeywordCounts = Schemas['KeywordCounts'];
export type UrgentItem = UrgentList['items'][number];
export type Acknowledged = Schemas['Acknowledged'];
export type User = Schemas['User'];
export type UserList = Schemas['UserList'];
export type NewUser = Schemas['NewUser'];
export type Member = Schemas['Member'];
export type MemberList = Schemas['MemberList'];
export type MemberRole = Member['role'];
export type RetentionRun = Schemas['RetentionRun'];
export type Preferences = Schemas['Preferences'];

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
export const put = <T>(path: string, body: unknown) => api<T>('PUT', path, body);
export const del = (path: string) => api<null>('DELETE', path);

/**
 * Uploads a file as a multipart form (the server reads the format from the
 * file's name and type), reporting bytes sent; XMLHttpRequest because fetch
 * has no upload progress.
 */
export function uploadFile(
  path: string,
  file: File,
  onProgress: (sent: number, total: number) => void,
  fields: Record<string, string> = {},
): Promise<ImportStarted> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api${path}`);
    xhr.upload.onprogress = (e) => onProgress(e.loaded, e.total || file.size);
    xhr.onerror = () => reject(new ApiError(0, 'the upload was interrupted; nothing was imported from it'));
    xhr.onload = () => {
      const parsed: unknown = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      if (xhr.status >= 200 && xhr.status < 300) resolve(parsed as ImportStarted);
      else reject(new ApiError(xhr.status, messageOf(parsed, xhr.status)));
    };
    const form = new FormData();
    for (const [name, value] of Object.entries(fields)) form.append(name, value);
    form.append('file', file, file.name);
    xhr.send(form);
  });
}

/** A fresh idempotency key for a verdict. */
export const clientId = () => crypto.randomUUID();
