/**
 * Where each role may go (docs/design.md#roles): navigation shows only these.
 * Add a feature's screen here with the roles that may use it.
 */
import type { Role } from '../../../shared/roles';
import type { NavItem } from '../../ui/app-shell';

interface RoleNavItem extends NavItem {
  roles: readonly Role[] | 'all';
}

export const NAV_ITEMS: readonly RoleNavItem[] = [
  { href: '/', label: 'Status', roles: 'all' },
  { href: '/queue', label: 'Queue', roles: ['examiner', 'supervisor'] },
  { href: '/workload', label: 'Workload', roles: ['supervisor'] },
  { href: '/batches', label: 'Batches', roles: ['clerk', 'supervisor'] },
  { href: '/scoring', label: 'Scoring', roles: ['supervisor'] },
  { href: '/users', label: 'Users', roles: ['admin'] },
  { href: '/access-log', label: 'Access log', roles: ['admin'] },
  { href: '/about', label: 'About', roles: 'all' },
];

/** The navigation for one role, in order. */
export function navFor(role: Role): NavItem[] {
  return NAV_ITEMS.filter((n) => n.roles === 'all' || n.roles.includes(role)).map(({ href, label }) => ({ href, label }));
}
