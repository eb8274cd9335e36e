import type { Role } from '../../../shared/roles';

/**
 * Where each role lands after sign-in: the screen its day starts on. Examiners and
 * supervisors land on the status page until the queue and workload screens exist.
 */
export const START_PATH: Record<Role, string> = {
  clerk: '/batches',
  examiner: '/',
  supervisor: '/',
  admin: '/users',
};
