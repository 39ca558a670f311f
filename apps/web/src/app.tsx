import type { ComponentType } from 'preact';
import { useEffect, useRef, useState } from 'preact/hooks';
import { ApiError, get, post, type Desk, type Me, type Role } from './api';
import { Cautions } from './components/cautions';
import { match, navigate, onLinkClick, useLocation } from './router';
import { deskTabs, SCREENS, type ScreenPattern, type ScreenRoute } from './routes';
import { DeskHome } from './pages/desk-home';
import { DeskNew } from './pages/desk-new';
import { DeskOverview } from './pages/desk-overview';
import { ImportPage } from './pages/import';
import { CoveragePage } from './pages/coverage';
import { SettingsPage } from './pages/settings';
import { ModelsPage } from './pages/models';
import { ModelVersionPage } from './pages/model-version';
import { TrailPage } from './pages/trail';
import { ItemPage } from './pages/item';
import { DisagreementsPage } from './pages/disagreements';
import { QueuePage } from './pages/queue';
import { SignIn } from './pages/sign-in';
import { AccountsPage } from './pages/accounts';
import { GlossaryPage } from './pages/glossary';

export interface PageProps {
  me: Me;
  /** The role that counts on this screen: the caller's role on the desk for a desk's screens, else the account role. */
  role: Role;
  params: Record<string, string>;
  query: URLSearchParams;
}

interface Route extends ScreenRoute {
  page: ComponentType<PageProps>;
}

const PAGES: Record<ScreenPattern, ComponentType<PageProps>> = {
  '/': DeskHome,
  '/desks/new': DeskNew,
  '/accounts': AccountsPage,
  '/glossary': GlossaryPage,
  '/desks/:deskId/queue': QueuePage,
  '/desks/:deskId': DeskOverview,
  '/desks/:deskId/import': ImportPage,
  '/desks/:deskId/coverage': CoveragePage,
  '/desks/:deskId/settings': SettingsPage,
  '/desks/:deskId/models': ModelsPage,
  '/desks/:deskId/models/:version': ModelVersionPage,
  '/desks/:deskId/trail': TrailPage,
  '/desks/:deskId/items/:itemId': ItemPage,
  '/desks/:deskId/disagreements': DisagreementsPage,
};

/** Every screen with its page. */
export const ROUTES: Route[] = SCREENS.map((r) => ({ ...r, roles: [...r.roles], page: PAGES[r.pattern] }));

export { deskTabs };

const ROLE_NAMES: Record<Role, string> = {
  reviewer: 'reviewer',
  supervisor: 'supervisor',
  auditor: 'auditor',
  admin: 'administrator',
};

export function App() {
  const [me, setMe] = useState<Me | null | undefined>(undefined);
  const where = useLocation();
  // The narrow-screen menu closes whenever the screen changes.
  const [menuOpen, setMenuOpen] = useState(false);
  const menuButton = useRef<HTMLButtonElement>(null);
  useEffect(() => setMenuOpen(false), [where.path]);

  // The desk of the screen, with the caller's role on it; 'missing' when the server answers no (not a member).
  const deskIdOfPath = /^\/desks\/(\d+)(\/|$)/.exec(where.path)?.[1];
  const [desk, setDesk] = useState<{ id: string; desk: Desk | 'missing' } | null>(null);
  useEffect(() => {
    if (!deskIdOfPath || !me) return;
    let live = true;
    get<Desk>(`/desks/${deskIdOfPath}`).then(
      (d) => live && setDesk({ id: deskIdOfPath, desk: d }),
      () => live && setDesk({ id: deskIdOfPath, desk: 'missing' }),
    );
    return () => {
      live = false;
    };
  }, [deskIdOfPath, me?.id]);

  useEffect(() => {
    get<Me>('/auth/me').then(setMe, () => setMe(null));
    const out = () => setMe(null);
    window.addEventListener('cribra:signed-out', out);
    return () => window.removeEventListener('cribra:signed-out', out);
  }, []);

  useEffect(() => {
    if (me === null && where.path !== '/signin')
      navigate(
        `/signin?next=${encodeURIComponent(where.path + (where.query.toString() ? `?${where.query}` : ''))}`,
        true,
      );
  }, [me, where.path]);

  if (me === undefined)
    return (
      <p class="loading" role="status">
        Loading…
      </p>
    );
  if (me === null || where.path === '/signin') {
    return (
      <SignIn
        onSignedIn={(m) => {
          setMe(m);
          navigate(safeNext(where.query.get('next')), true);
        }}
        signedIn={me}
      />
    );
  }

  let found: { route: Route; params: Record<string, string> } | null = null;
  for (const route of ROUTES) {
    const params = match(route.pattern, where.path);
    if (params) {
      found = { route, params };
      break;
    }
  }
  document.title = found ? `${found.route.title} · Cribra` : 'Not found · Cribra';
  const deskId = found?.params.deskId;
  const deskNow = deskId && desk?.id === deskId ? desk.desk : null;
  // On a desk's screens the role there counts; elsewhere the account role.
  const role: Role | null = deskId ? (deskNow && deskNow !== 'missing' ? (deskNow.role ?? null) : null) : me.role;
  const signOut = async () => {
    await post('/auth/logout').catch(() => undefined);
    setMe(null);
  };
  return (
    <div class="shell" onClick={onLinkClick}>
      <header class="topbar">
        <a class="brand" href="/">
          Cribra
        </a>
        <button
          type="button"
          class="menu-toggle"
          ref={menuButton}
          aria-expanded={menuOpen}
          aria-controls="site-menu"
          onClick={() => setMenuOpen(!menuOpen)}
        >
          Menu
        </button>
        <div
          id="site-menu"
          class={menuOpen ? 'site-menu open' : 'site-menu'}
          onClick={(e) => {
            // A section chosen from the menu closes it, even the screen already open.
            if (e.target instanceof Element && e.target.closest('a')) setMenuOpen(false);
          }}
          onKeyDown={(e) => {
            if (e.key === 'Escape' && menuOpen) {
              setMenuOpen(false);
              menuButton.current?.focus();
            }
          }}
        >
          {deskId && role && deskNow && deskNow !== 'missing' && (
            <DeskTabs desk={deskNow} role={role} path={where.path} />
          )}
          <div class="who">
            {me.role === 'admin' && <a href="/accounts">Accounts</a>}
            <span>
              {me.name} <span class="role">({ROLE_NAMES[me.role]})</span>
            </span>
            <button type="button" class="quiet" onClick={() => void signOut()}>
              Sign out
            </button>
          </div>
        </div>
      </header>
      <main id="main">
        {!found && <Refusal title="No such page" text={`There is no screen at ${where.path}.`} />}
        {found && deskId && !deskNow && (
          <p class="loading" role="status">
            Loading…
          </p>
        )}
        {found && deskId && (deskNow === 'missing' || (deskNow && !role)) && (
          <Refusal
            title="No such desk"
            text={`There is no desk ${deskId}, or you are not one of its members. A supervisor of the desk or an administrator can add you.`}
          />
        )}
        {found && role && !found.route.roles.includes(role) && (
          <Refusal
            title="Not open to your role"
            text={
              deskId
                ? `This screen is for the desk's ${found.route.roles.map((r) => ROLE_NAMES[r]).join(' and ')}s. You are signed in as ${me.name}, a ${ROLE_NAMES[role]} on this desk; the server refuses its data to your role as well.`
                : `This screen is for ${found.route.roles.map((r) => ROLE_NAMES[r]).join(' and ')} accounts. You are signed in as ${me.name}, a ${ROLE_NAMES[me.role]}; the server refuses its data to your role as well.`
            }
          />
        )}
        {found && role && found.route.roles.includes(role) && (
          <found.route.page me={me} role={role} params={found.params} query={where.query} />
        )}
      </main>
      <footer class="footer">
        <p class="footer-links">
          <a href="/glossary">Glossary: what the words and figures mean</a>
        </p>
        <Cautions compact />
      </footer>
    </div>
  );
}

function safeNext(next: string | null): string {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/signin') ? next : '/';
}

function DeskTabs({ desk, role, path }: { desk: Desk; role: Role; path: string }) {
  const tabs = deskTabs(role, desk.id);
  return (
    <nav class="desk-tabs" aria-label="Desk sections">
      <span class="desk-name">
        {desk.name} <span class="role">({ROLE_NAMES[role]} here)</span>
      </span>
      {tabs.map((t) => (
        <a
          href={t.href}
          aria-current={path === t.href || (t.label === 'Models' && path.startsWith(`${t.href}/`)) ? 'page' : undefined}
        >
          {t.label}
        </a>
      ))}
    </nav>
  );
}

export function Refusal({ title, text }: { title: string; text: string }) {
  return (
    <section class="refusal" role="alert">
      <h1>{title}</h1>
      <p>{text}</p>
      <p>
        <a href="/">Back to your desks</a>
      </p>
    </section>
  );
}

/** Loads data for a screen; returns [data, error, reload]. */
export function useData<T>(path: string | null, deps: unknown[] = []): [T | null, string | null, () => void] {
  const [data, setData] = useState<T | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [tick, setTick] = useState(0);
  useEffect(() => {
    if (!path) return;
    let live = true;
    get<T>(path).then(
      (d) => {
        if (live) {
          setData(d);
          setError(null);
        }
      },
      (e: unknown) => {
        if (live) setError(e instanceof ApiError ? e.message : String(e));
      },
    );
    return () => {
      live = false;
    };
  }, [path, tick, ...deps]);
  return [data, error, () => setTick((t) => t + 1)];
}

/** Runs `fn` every `ms` while the screen is open. */
export function useInterval(fn: () => void, ms: number | null): void {
  const latest = useRef(fn);
  latest.current = fn;
  useEffect(() => {
    if (ms === null) return;
    const id = setInterval(() => latest.current(), ms);
    return () => clearInterval(id);
  }, [ms]);
}
