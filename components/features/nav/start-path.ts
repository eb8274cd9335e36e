import type { Href } from 'expo-router';
import type { Role } from '../../../shared/roles';

/**
 * Where each role lands after sign-in: the screen its day starts on. Examiners start on
 * their queue, supervisors on the workload of their team.
 */
export const START_PATH: Record<Role, Href> = {
  clerk: '/batches',
  examiner: '/queue',
  supervisor: '/workload',
  admin: '/users',
};
