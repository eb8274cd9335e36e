/**
 * The four staff roles (docs/design.md#roles). Taxpayers have no account.
 */
import { z } from 'zod';

export const ROLES = ['clerk', 'examiner', 'supervisor', 'admin'] as const;
export const RoleSchema = z.enum(ROLES);
export type Role = z.infer<typeof RoleSchema>;

/** Words shown for each role on screen. */
export const ROLE_LABELS: Record<Role, string> = {
  clerk: 'Intake clerk',
  examiner: 'Examiner',
  supervisor: 'Supervisor',
  admin: 'Administrator',
};
