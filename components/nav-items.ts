/** Keelson's navigation destinations by role (glossary names). Later screens live under these paths. */
import type { Role } from '../shared/roles';

export interface NavItem {
  href: '/' | '/libraries' | '/runs' | '/review' | '/admin';
  label: string;
  /** A plain glyph drawn beside the label (no icon font). */
  glyph: string;
  roles: readonly Role[];
}

const ALL: readonly Role[] = ['admin', 'researcher', 'reviewer', 'desk'];

export const NAV_ITEMS: readonly NavItem[] = [
  { href: '/', label: 'Home', glyph: '\u2302', roles: ALL },
  { href: '/libraries', label: 'Libraries', glyph: '\u2261', roles: ALL },
  { href: '/runs', label: 'Runs', glyph: '\u25B7', roles: ALL },
  { href: '/review', label: 'Sign-offs', glyph: '\u2713', roles: ['reviewer', 'admin'] },
  { href: '/admin', label: 'Team', glyph: '\u25A6', roles: ['admin'] },
];

/** Phone bottom bar holds at most this many destinations; the rest are linked from Home and the rail. */
export const BAR_MAX = 4;

/** Every destination a role may open, in rail order. */
export function navItemsFor(role: Role): NavItem[] {
  return NAV_ITEMS.filter((i) => i.roles.includes(role));
}

/**
 * The phone bar for a role: at most four. Admins get Home, Libraries, Runs, Team (Sign-offs stays on
 * Home and in the wide rail).
 */
export function barItemsFor(role: Role): NavItem[] {
  const items = navItemsFor(role);
  if (items.length <= BAR_MAX) return items;
  const keep = role === 'admin' ? ['/', '/libraries', '/runs', '/admin'] : items.slice(0, BAR_MAX).map((i) => i.href);
  return items.filter((i) => keep.includes(i.href));
}

/** True when `pathname` is inside destination `href`. */
export function isActive(href: NavItem['href'], pathname: string): boolean {
  if (href === '/') return pathname === '/' || pathname === '';
  // Model specs and deep checks are pages of the Runs section.
  if (href === '/runs' && (pathname === '/specs' || pathname.startsWith('/specs/') || pathname === '/jobs' || pathname.startsWith('/jobs/'))) return true;
  return pathname === href || pathname.startsWith(`${href}/`);
}

/** Only same-site paths are followed after sign-in (no `//host`, no loop back to /sign-in). */
export function safeNext(next: unknown): string {
  return typeof next === 'string' && next.startsWith('/') && !next.startsWith('//') && !next.startsWith('/sign-in') ? next : '/';
}
