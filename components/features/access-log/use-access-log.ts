import { keepPreviousData, useQuery } from '@tanstack/react-query';
import { apiGet } from '../../../hooks/api-client';
import { AccessLogPageSchema, type AccessLogQuery } from '../../../shared/access-log';

/** One filtered page of the access log (admin). */
export function useAccessLog(q: Partial<AccessLogQuery>) {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== '') params.set(k, String(v));
  return useQuery({
    queryKey: ['access-log', params.toString()],
    queryFn: () => apiGet(`/api/access-log?${params}`, AccessLogPageSchema),
    placeholderData: keepPreviousData,
  });
}
