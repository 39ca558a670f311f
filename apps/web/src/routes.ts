/** The roles of the API's role matrix (the same strings as `Me['role']`); kept here so this file imports nothing. */
export type Role = 'reviewer' | 'supervisor' | 'auditor' | 'admin';

/** One screen: its path pattern, who may open it and its title. The pages are attached in app.tsx. */
export interface ScreenRoute {
  pattern: string;
  roles: Role[];
  title: string;
}

const SUPERVISOR: Role[] = ['supervisor'];
const READERS: Role[] = ['supervisor', 'auditor'];

/**
 * Every screen and who may open it; the same split as the API's role matrix.
 * On a desk's screens (`/desks/:deskId…`) the roles are roles on that desk
 * (the caller's membership); elsewhere they are account roles.
 * Kept free of components so the browser tests can walk the same list.
 */
export const SCREENS = [
  { pattern: '/', roles: ['reviewer', 'supervisor', 'auditor', 'admin'], title: 'Desks' },
  { pattern: '/desks/new', roles: SUPERVISOR, title: 'New desk' },
  { pattern: '/accounts', roles: ['admin'], title: 'Accounts' },
  { pattern: '/glossary', roles: ['reviewer', 'supervisor', 'auditor', 'admin'], title: 'Glossary' },
  { pattern: '/desks/:deskId/queue', roles: ['reviewer'], title: 'Queue' },
  { pattern: '/desks/:deskId', roles: SUPERVISOR, title: 'Desk' },
  { pattern: '/desks/:deskId/import', roles: SUPERVISOR, title: 'Import' },
  { pattern: '/desks/:deskId/coverage', roles: SUPERVISOR, title: 'Coverage' },
  { pattern: '/desks/:deskId/settings', roles: SUPERVISOR, title: 'Settings' },
  { pattern: '/desks/:deskId/models', roles: READERS, title: 'Model versions' },
  { pattern: '/desks/:deskId/models/:version', roles: READERS, title: 'Model version' },
  { pattern: '/desks/:deskId/trail', roles: READERS, title: 'Decision trail' },
  { pattern: '/desks/:deskId/items/:itemId', roles: READERS, title: 'Item' },
  { pattern: '/desks/:deskId/disagreements', roles: READERS, title: 'Agreement' },
] as const satisfies readonly ScreenRoute[];

export type ScreenPattern = (typeof SCREENS)[number]['pattern'];

/** The desk's sections a role can open, in the order of the tab bar. */
export function deskTabs(role: Role, deskId: number | string): Array<{ href: string; label: string }> {
  const base = `/desks/${deskId}`;
  if (role === 'reviewer') return [{ href: `${base}/queue`, label: 'Queue' }];
  const tabs =
    role === 'supervisor'
      ? [
          { href: base, label: 'Overview' },
          { href: `${base}/import`, label: 'Import' },
          { href: `${base}/coverage`, label: 'Coverage' },
          { href: `${base}/settings`, label: 'Settings' },
        ]
      : [];
  if (role === 'supervisor' || role === 'auditor')
    tabs.push(
      { href: `${base}/models`, label: 'Models' },
      { href: `${base}/disagreements`, label: 'Agreement' },
      { href: `${base}/trail`, label: 'Trail' },
    );
  return tabs;
}
