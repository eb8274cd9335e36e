/**
 * react-query hooks for the supervisor's workload screen. Reassignment and the case lists
 * come from the cases feature's hooks (components/features/cases/use-cases.ts).
 */
import { useQuery } from '@tanstack/react-query';
import { apiGet } from '../../../hooks/api-client';
import { WorkloadSchema } from '../../../shared/case-api';

/** Per-examiner counts and the open cases nobody holds. */
export function useWorkload() {
  return useQuery({ queryKey: ['workload'], queryFn: () => apiGet('/api/workload', WorkloadSchema) });
}
