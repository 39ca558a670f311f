import { useState } from 'preact/hooks';
import { patch, type Desk, type Progress } from '../api';
import { useData, type PageProps } from '../app';
import { DeskForm } from '../components/desk-form';
import { RetentionPanel } from '../components/retention-panel';
import { TermSuggestionsPanel } from '../components/term-suggestions';

export function SettingsPage({ params }: PageProps) {
  const [desk, error, reload] = useData<Desk>(`/desks/${params.deskId}`);
  // Once verdicts exist the number keys have a meaning for reviewers: the categories' order is fixed.
  const [progress] = useData<Progress>(`/desks/${params.deskId}/progress`);
  const [saved, setSaved] = useState<string | null>(null);
  // Kept here: the retention panel is drawn afresh (its key) once the saved desk comes back.
  const [retentionSaved, setRetentionSaved] = useState<string | null>(null);
  return (
    <section class="page narrow">
      <h1>Settings</h1>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {saved && (
        <p class="notice" role="status">
          {saved}
        </p>
      )}
      {desk && (
        <DeskForm
          key={desk.updatedAt}
          initial={desk}
          orderFixed={(progress?.verdicts.total ?? 0) > 0}
          submitLabel="Save the settings"
          onSubmit={async (v) => {
            await patch(`/desks/${desk.id}`, v);
            setSaved(`Saved at ${new Date().toLocaleTimeString('en-GB')}. Every change is kept in the audit trail.`);
            reload();
          }}
        />
      )}
      {desk && (
        <RetentionPanel
          key={desk.updatedAt}
          desk={desk}
          saved={retentionSaved}
          onSaved={(message) => {
            setRetentionSaved(message);
            reload();
          }}
        />
      )}
      {desk && <TermSuggestionsPanel desk={desk} onSeedTermsChanged={reload} />}
    </section>
  );
}
