import { useEffect, useState } from 'preact/hooks';

/** A small history router: paths are plain URLs, so any screen can be bookmarked or typed. */
export function navigate(to: string, replace = false): void {
  if (to === location.pathname + location.search) return;
  if (replace) history.replaceState(null, '', to);
  else history.pushState(null, '', to);
  window.dispatchEvent(new Event('cribra:navigate'));
}

export function useLocation(): { path: string; query: URLSearchParams } {
  const read = () => ({ path: location.pathname, query: new URLSearchParams(location.search) });
  const [where, setWhere] = useState(read);
  useEffect(() => {
    const update = () => setWhere(read());
    window.addEventListener('popstate', update);
    window.addEventListener('cribra:navigate', update);
    return () => {
      window.removeEventListener('popstate', update);
      window.removeEventListener('cribra:navigate', update);
    };
  }, []);
  return where;
}

/** Matches `/desks/:deskId/models/:version` style patterns; null when the path does not fit. */
export function match(pattern: string, path: string): Record<string, string> | null {
  const p = pattern.split('/').filter(Boolean);
  const a = path.split('/').filter(Boolean);
  if (p.length !== a.length) return null;
  const params: Record<string, string> = {};
  for (let i = 0; i < p.length; i++) {
    if (p[i].startsWith(':')) params[p[i].slice(1)] = decodeURIComponent(a[i]);
    else if (p[i] !== a[i]) return null;
  }
  return params;
}

/** Intercepts plain left clicks on same-origin links so they change screens without a page load. */
export function onLinkClick(e: MouseEvent): void {
  if (e.defaultPrevented || e.button !== 0 || e.metaKey || e.ctrlKey || e.shiftKey || e.altKey) return;
  const a = e.target instanceof Element ? e.target.closest('a') : null;
  if (!a || a.target || a.hasAttribute('download') || a.origin !== location.origin || a.pathname.startsWith('/api/'))
    return;
  e.preventDefault();
  navigate(a.pathname + a.search);
}
