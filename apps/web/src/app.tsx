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
import { DisagreementsPage } from './pages/disagreements';
import { QueuePage } from './pages/queue';
import { SignIn } from './pages/sign-in';

export interface PageProps {
  me: Me;
  params: Record<string, string>;
  query: URLSearchParams;
}

interface Route extends ScreenRoute {
  page: ComponentType<PageProps>;
}

const PAGES: Record<ScreenPattern, ComponentType<PageProps>> = {
  '/': DeskHome,
  '/desks/new': DeskNew,
  '/desks/:deskId/queue': QueuePage,
  '/desks/:deskId': DeskOverview,
  '/desks/:deskId/import': ImportPage,
  '/desks/:deskId/coverage': CoveragePage,
  '/desks/:deskId/settings': SettingsPage,
  '/desks/:deskId/models': ModelsPage,
  '/desks/:deskId/models/:version': ModelVersionPage,
  '/desks/:deskId/trail': TrailPage,
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
          {deskId && <DeskTabs me={me} deskId={deskId} path={where.path} />}
          <div class="who">
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
        {found && !found.route.roles.includes(me.role) && (
          <Refusal
            title="Not open to your role"
            text={`This screen is for ${found.route.roles.map((r) => ROLE_NAMES[r]).join(' and ')} accounts. You are signed in as ${me.name}, a ${ROLE_NAMES[me.role]}; the server refuses its data to your role as well.`}
          />
        )}
        {found && found.route.roles.includes(me.role) && (
          <found.route.page me={me} params={found.params} query={where.query} />
        )}
      </main>
      <footer class="footer">
        <Cautions compact />
      </footer>
    </div>
  );
}

function safeNext(next: string | null): string {
  return next && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/signin') ? next : '/';
}

function DeskTabs({ me, deskId, path }: { me: Me; deskId: string; path: string }) {
  const [desk, setDesk] = useState<Desk | null>(null);
  useEffect(() => {
    get<Desk>(`/desks/${deskId}`).then(setDesk, () => setDesk(null));
  }, [deskId]);
  const tabs = deskTabs(me.role, deskId);
  return (
    <nav class="desk-tabs" aria-label="Desk sections">
      <span class="desk-name">{desk?.name ?? `Desk ${deskId}`}</span>
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
