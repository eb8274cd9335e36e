/**
 * Where each role may go (docs/design.md#roles): navigation shows only these. Each screen
 * takes its roles from the capability it needs in the policy table (shared/permissions.ts),
 * so the roles are stated once, where the server's routes read them too.
 */
import { CAN } from '../../../shared/permissions';
import type { Role } from '../../../shared/roles';
import type { NavItem } from '../../ui/app-shell';

interface RoleNavItem extends NavItem {
  roles: readonly Role[] | 'all';
}

export const NAV_ITEMS: readonly RoleNavItem[] = [
  { href: '/', label: 'Status', roles: 'all' },
  { href: '/queue', label: 'Queue', roles: CAN.readCases },
  { href: '/workload', label: 'Workload', roles: CAN.readWorkload },
  { href: '/batches', label: 'Batches', roles: CAN.readBatches },
  { href: '/scoring', label: 'Scoring', roles: CAN.editScoring },
  { href: '/programme', label: 'Programme', roles: CAN.readProgramme },
  { href: '/users', label: 'Users', roles: CAN.manageUsers },
  { href: '/access-log', label: 'Access log', roles: CAN.readAccessLog },
  { href: '/about', label: 'About', roles: 'all' },
];

/** The navigation for one role, in order. */
export function navFor(role: Role): NavItem[] {
  return NAV_ITEMS.filter((n) => n.roles === 'all' || n.roles.includes(role)).map(({ href, label }) => ({ href, label }));
}
