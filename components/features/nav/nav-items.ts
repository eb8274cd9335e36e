/**
 * Where each role may go (docs/design.md#roles): navigation shows only these. Each screen
 * takes its roles from the capability it needs in the policy table (shared/permissions.ts),
 * so the roles are stated once, where the server's routes read them too.
 *
 * The list starts where the work is (issue 14): the system status is no destination of its
 * own but a page under About (`also`), which stays highlighted there; a case page belongs to
 * the queue.
 */
import { CAN } from '../../../shared/permissions';
import type { Role } from '../../../shared/roles';
import type { NavItem } from '../../ui/app-shell';

interface RoleNavItem extends NavItem {
  roles: readonly Role[] | 'all';
}

export const NAV_ITEMS: readonly RoleNavItem[] = [
  { href: '/queue', label: 'Queue', roles: CAN.readCases, also: ['/cases'] },
  { href: '/workload', label: 'Workload', roles: CAN.readWorkload },
  { href: '/analysis', label: 'Digit analysis', roles: CAN.analyse },
  { href: '/batches', label: 'Batches', roles: CAN.readBatches },
  { href: '/scoring', label: 'Scoring', roles: CAN.editScoring },
  { href: '/programme', label: 'Programme', roles: CAN.readProgramme },
  { href: '/users', label: 'Users', roles: CAN.manageUsers },
  { href: '/access-log', label: 'Access log', roles: CAN.readAccessLog },
  { href: '/about', label: 'About', roles: 'all', also: ['/status'] },
];

/** The navigation for one role, in order. */
export function navFor(role: Role): NavItem[] {
  return NAV_ITEMS.filter((n) => n.roles === 'all' || n.roles.includes(role)).map(({ href, label, also }) => ({ href, label, also }));
}
