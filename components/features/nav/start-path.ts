import type { Href } from 'expo-router';
import type { Role } from '../../../shared/roles';

/**
 * Where each role lands after sign-in (and at the signed-in root, `/`): the screen its day
 * starts on. Examiners start on their queue, which opens on their own cases with what needs
 * them (issue 14: components/features/cases/queue-screen.tsx), supervisors on the workload
 * of their team.
 */
export const START_PATH: Record<Role, Href> = {
  clerk: '/batches',
  examiner: '/queue',
  supervisor: '/workload',
  admin: '/users',
};
