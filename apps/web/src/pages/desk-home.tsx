import { useData, type PageProps } from '../app';
import { deskTabs } from '../routes';
import type { DeskList } from '../api';

const ROLE_HINT: Record<string, string> = {
  reviewer: 'Your desks, with your role on each: as reviewer you decide items in the queue.',
  supervisor: 'Your desks, with your role on each; you can also create a new desk.',
  auditor: 'Your desks, with your role on each: as auditor you read model versions and the decision trail.',
  admin:
    'Every desk. You manage accounts and who works on which desk (Accounts); you read a desk only where you are a member.',
};

const ROLE_ON_DESK: Record<string, string> = {
  reviewer: 'you review here',
  supervisor: 'you supervise here',
  auditor: 'you audit here',
};

export function DeskHome({ me }: PageProps) {
  const [data, error] = useData<DeskList>('/desks');
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
          {me.role === 'supervisor'
            ? 'You have no desk yet. Create one to begin.'
            : me.role === 'admin'
              ? 'There is no desk yet: supervisors create desks.'
              : "You are not a member of any desk yet: a desk's supervisor or an administrator can add you."}
        </p>
      )}
      {data && data.desks.length > 0 && (
        <ul class="desk-list">
          {data.desks.map((d) => (
            <li class="desk-card" data-desk-role={d.role ?? 'none'}>
              <h2>{d.role ? <a href={deskTabs(d.role, d.id)[0].href}>{d.name}</a> : d.name}</h2>
              <p class="muted">
                {d.role ? `${ROLE_ON_DESK[d.role]} · ` : 'not a member · '}
                Categories: {d.categories.map((c) => c.name).join(', ')} · coverage target{' '}
                {Math.round(d.coverageTarget * 100)} % ·{' '}
                {d.currentModelVersion ? `model version ${d.currentModelVersion}` : 'no model yet'}
              </p>
              {d.role && (
                <p class="links">
                  {deskTabs(d.role, d.id).map((t) => (
                    <a href={t.href}>{t.label}</a>
                  ))}
                </p>
              )}
              {!d.role && me.role === 'admin' && (
                <p class="links">
                  <a href="/accounts">Manage its members</a>
                </p>
              )}
            </li>
          ))}
        </ul>
      )}
    </section>
  );
}
