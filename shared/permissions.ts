/**
 * Who may do what: the one policy table (docs/design.md#roles, need-to-know). The server's
 * routes name a capability from here (`allow('uploadBatches')`), and the app shows only
 * what a role may use, from the same table.
 *
 * clerk — batches; examiner — cases (read, claim, own cases' actions), analyses;
 * supervisor — all an examiner may, on every case, plus assign, export, scoring profiles,
 * batches (read), the Programme; admin — users and the access log, but no taxpayer data.
 */
import type { Role } from './roles';

export const CAN = {
  uploadBatches: ['clerk'],
  readBatches: ['clerk', 'supervisor'],
  readCases: ['examiner', 'supervisor'],
  workCases: ['examiner', 'supervisor'],
  assignCases: ['supervisor'],
  /** Reopen a referred or closed case with a reason (issue 14). */
  reopenCases: ['supervisor'],
  exportQueue: ['supervisor'],
  readWorkload: ['supervisor'],
  /** The Programme screen: outcomes of the selection and the random review cases (issue 17). */
  readProgramme: ['supervisor'],
  editScoring: ['supervisor'],
  /** Run the daily pass now: expiries, reminders, digests (issue 13). */
  runHousekeeping: ['supervisor'],
  readScoring: ['examiner', 'supervisor'],
  analyse: ['examiner', 'supervisor'],
  manageUsers: ['admin'],
  readAccessLog: ['admin'],
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof CAN;

/** True when the role has the capability. */
export function can(role: Role, capability: Capability): boolean {
  return (CAN[capability] as readonly Role[]).includes(role);
}
