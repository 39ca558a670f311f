import { useData, type PageProps } from '../app';
import { deskTabs } from '../routes';
import type { DeskList } from '../api';

const ROLE_HINT: Record<string, string> = {
  reviewer: "Open a desk's queue to start deciding items.",
  supervisor: 'Open a desk to import texts, set the coverage target and follow progress, or create a new desk.',
  auditor: "Open a desk's model versions and decision trail. Everything here is read-only for you.",
  admin: 'Accounts are managed with `cribra user add` and the /api/users routes; desks are run by supervisors.',
};

export function DeskHome({ me }: PageProps) {
  const [data, error] = useData<DeskList>(me.role === 'admin' ? null : '/desks');
  return (
    <section class="page">
      <div class="page-head">
        <h1>Desks</h1>
        {me.role === 'supervisor' && (
          <a class="button primary" href="/desks/new">
            New desk
          </a>
        )}
      </div>
      <p class="lead">{ROLE_HINT[me.role]}</p>
      {error && (
        <p class="error" role="alert">
          {error}
        </p>
      )}
      {data && data.desks.length === 0 && (
        <p class="empty">
          There is no desk yet.{me.role === 'supervisor' ? ' Create one to begin.' : ' A supervisor creates desks.'}
        </p>
      )}
      {data && data.desks.length > 0 && (
        <ul class="desk-list">
          {data.desks.map((d) => (
            <li class="desk-card">
              <h2>
                <a href={deskTabs(me.role, d.id)[0].href}>{d.name}</a>
              </h2>
              <p class="muted">
                Categories: {d.categories.map((c) => c.name).join(', ')} · coverage target{' '}
                {Math.round(d.coverageTarget * 100)} % ·{' '}
                {d.currentModelVersion ? `model version ${d.currentModelVersion}` : 'no model yet'}
              </p>
              <p class="links">
                {deskTabs(me.role, d.id).map((t) => (
                  <a href={t.href}>{t.label}</a>
                ))}
              </p>
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
