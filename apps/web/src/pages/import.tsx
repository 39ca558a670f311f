import { useState } from 'preact/hooks';
import { get, uploadFile, type ImportList, type ImportView } from '../api';
import { useData, useInterval, type PageProps } from '../app';
import { count, when } from '../format';
import { TableBox } from '../components/table-box';

const FINISHED = new Set(['done', 'failed']);

/** Import a file: upload with a progress bar, then the rows as the worker reads them, then every rejected row with its reason. */
export function ImportPage({ params }: PageProps) {
  const deskId = params.deskId;
  const [file, setFile] = useState<File | null>(null);
  const [sent, setSent] = useState<{ sent: number; total: number } | null>(null);
  const [current, setCurrent] = useState<ImportView | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [labelField, setLabelField] = useState('');
  const [labelDraw, setLabelDraw] = useState<'archive' | 'random'>('archive');
  const [uniformSample, setUniformSample] = useState(false);
  const labelled = labelField.trim() !== '';
  const needsStatement = labelled && labelDraw === 'random' && !uniformSample;
  const [history, , reloadHistory] = useData<ImportList>(`/desks/${deskId}/imports`);

  const poll = async () => {
    if (!current || FINISHED.has(current.state)) return;
    try {
      const v = await get<ImportView>(`/imports/${current.id}`);
      setCurrent(v);
      if (FINISHED.has(v.state)) reloadHistory();
    } catch (e) {
      setError((e as Error).message);
    }
  };
  useInterval(() => void poll(), current && !FINISHED.has(current.state) ? 500 : null);

  const start = async (e: Event) => {
    e.preventDefault();
    if (!file) return;
    setError(null);
    setCurrent(null);
    setSent({ sent: 0, total: file.size });
    try {
      const fields: Record<string, string> = labelled
        ? {
            labelField: labelField.trim(),
            labelDraw,
            ...(labelDraw === 'random' ? { uniformSample: String(uniformSample) } : {}),
          }
        : {};
      const { importId } = await uploadFile(
        `/desks/${deskId}/imports`,
        file,
        (s, t) => setSent({ sent: s, total: t }),
        fields,
      );
      setCurrent(await get<ImportView>(`/imports/${importId}`));
    } catch (err) {
      setError((err as Error).message);
      setSent(null);
    }
  };

  return (
    <section class="page">
      <h1>Import texts</h1>
      <p class="lead">
        NDJSON (one JSON object per line), CSV with a header row, or a JSON array. Each row needs a <code>text</code>;{' '}
        <code>externalId</code>, <code>source</code> and <code>createdAt</code> (when the text was posted) are optional,
        and any other field is kept as the item's details. Rows with the same external id or the same text as an item
        already on the desk are counted as duplicates, not imported twice.
      </p>
      <form class="import-form" onSubmit={(e) => void start(e)}>
        <label
          class="file-drop"
          onDragOver={(e) => e.preventDefault()}
          onDrop={(e) => {
            e.preventDefault();
            const f = e.dataTransfer?.files[0];
            if (f) setFile(f);
          }}
        >
          <span>{file ? `${file.name} (${count(file.size)} bytes)` : 'Choose a file or drop it here'}</span>
          <input
            type="file"
            name="file"
            accept=".ndjson,.jsonl,.csv,.json,application/json,text/csv,application/x-ndjson"
            onChange={(e) => setFile(e.currentTarget.files?.[0] ?? null)}
          />
        </label>
        <fieldset class="label-options">
          <legend>Labels already given (optional)</legend>
          <label>
            Label column
            <input
              type="text"
              name="labelField"
              value={labelField}
              placeholder="e.g. label"
              aria-describedby="label-field-help"
              onInput={(e) => setLabelField(e.currentTarget.value)}
            />
          </label>
          <p id="label-field-help" class="muted">
            A row whose label names one of the desk's categories becomes a decided item, recorded as decided by the
            account <code>archive</code>; a row without a label stays open for review; any other label rejects its row.
          </p>
          {labelled && (
            <div role="radiogroup" aria-label="How the labelled texts were chosen">
              <label class="inline">
                <input
                  type="radio"
                  name="labelDraw"
                  value="archive"
                  checked={labelDraw === 'archive'}
                  onChange={() => setLabelDraw('archive')}
                />
                Archive: the labels train the model and never calibrate its prediction sets
              </label>
              <label class="inline">
                <input
                  type="radio"
                  name="labelDraw"
                  value="random"
                  checked={labelDraw === 'random'}
                  onChange={() => setLabelDraw('random')}
                />
                Random: the labels calibrate the prediction sets
              </label>
            </div>
          )}
          {labelled && labelDraw === 'random' && (
            <label class="inline">
              <input
                type="checkbox"
                name="uniformSample"
                checked={uniformSample}
                onChange={(e) => setUniformSample(e.currentTarget.checked)}
              />
              I state that these texts are a uniform random sample of the same stream this desk screens. Only such a
              sample may calibrate: texts picked by keyword, by escalation or by an earlier model would make the
              promised coverage untrue. The desk records who stated it and when.
            </label>
          )}
        </fieldset>
        <button
          type="submit"
          class="primary"
          disabled={
            !file || needsStatement || (sent !== null && !current) || (current !== null && !FINISHED.has(current.state))
          }
        >
          Import
        </button>
      </form>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {sent && !current && (
        <Bar
          label="Uploading"
          value={sent.sent}
          max={sent.total}
          text={`${count(sent.sent)} of ${count(sent.total)} bytes sent`}
        />
      )}
      {current && <ImportProgress v={current} />}
      <h2>Earlier imports</h2>
      {history && history.imports.length === 0 && <p class="muted">None yet.</p>}
      {history && history.imports.length > 0 && (
        <TableBox label="Earlier imports">
          <table class="data">
            <thead>
              <tr>
                <th>File</th>
                <th>Started</th>
                <th>State</th>
                <th class="num">Imported</th>
                <th class="num">Duplicates</th>
                <th class="num">Rejected</th>
                <th class="num">Labelled</th>
              </tr>
            </thead>
            <tbody>
              {history.imports.map((i) => (
                <tr>
                  <td>{i.fileName ?? '(request body)'}</td>
                  <td>{when(i.createdAt)}</td>
                  <td>{i.state}</td>
                  <td class="num">{count(i.imported)}</td>
                  <td class="num">{count(i.duplicates)}</td>
                  <td class="num">{count(i.rejected)}</td>
                  <td class="num">{i.labels ? `${count(i.labels.labelled)} (${i.labels.draw})` : ''}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
    </section>
  );
}

function Bar({ label, value, max, text }: { label: string; value: number; max: number; text: string }) {
  return (
    <div class="progress-block">
      <label>
        {label}
        <progress value={value} max={max || 1}>
          {text}
        </progress>
      </label>
      <p class="muted">{text}</p>
    </div>
  );
}

function ImportProgress({ v }: { v: ImportView }) {
  const done = v.state === 'done';
  return (
    <section class="import-progress" aria-live="polite" data-state={v.state}>
      <h2>
        {v.fileName ?? 'Import'}:{' '}
        {done
          ? 'finished'
          : v.state === 'failed'
            ? 'failed'
            : v.state === 'queued'
              ? 'waiting for a worker'
              : 'reading rows'}
      </h2>
      {!done && v.state !== 'failed' && <progress aria-label="Rows read" />}
      {done && <progress aria-label="Rows read" value={1} max={1} />}
      <dl class="figures">
        <div>
          <dt>Rows read</dt>
          <dd>{count(v.rowsRead)}</dd>
        </div>
        <div>
          <dt>Imported</dt>
          <dd>{count(v.imported)}</dd>
        </div>
        <div>
          <dt>Duplicates</dt>
          <dd>{count(v.duplicates)}</dd>
        </div>
        <div>
          <dt>Rejected</dt>
          <dd class={v.rejected ? 'bad' : ''}>{count(v.rejected)}</dd>
        </div>
        {v.labels && (
          <div>
            <dt>Labelled ({v.labels.draw})</dt>
            <dd>{count(v.labels.labelled)}</dd>
          </div>
        )}
      </dl>
      {v.labels?.uniformSample && (
        <p class="muted">
          {v.labels.uniformSample.statedBy} stated on {when(v.labels.uniformSample.statedAt)} that this file is a
          uniform random sample of the same stream.
        </p>
      )}
      {v.failure && (
        <p class="error" role="alert">
          The import stopped: {v.failure}
        </p>
      )}
      {v.errors.length > 0 && (
        <TableBox label="Rejected rows">
          <table class="data row-errors">
            <caption>
              Rejected rows{v.errors.length < v.rejected ? ` (the first ${v.errors.length} of ${v.rejected})` : ''}
            </caption>
            <thead>
              <tr>
                <th class="num">Row</th>
                <th>Reason</th>
              </tr>
            </thead>
            <tbody>
              {v.errors.map((e) => (
                <tr>
                  <td class="num">{e.row}</td>
                  <td>{e.reason}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </TableBox>
      )}
    </section>
  );
}
