/**
 * react-query hooks for case work: the queue, one case, and the actions on it. Every answer
 * is parsed with the shared schema (shared/case-api.ts). One case lives under
 * ['case', id], the key the letters panel also refreshes after it sends a letter.
 */
import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { API_BASE, apiGet, apiSend } from '../../../hooks/api-client';
import {
  BulkReassignResultSchema,
  CaseChangedSchema,
  CaseDetailSchema,
  CaseListSchema,
  CaseNoteSchema,
  ExaminerListSchema,
  RevealedTinSchema,
  type BulkReassign,
  type CaseListParams,
} from '../../../shared/case-api';
import type { TransitionRequest } from '../../../shared/cases';

/** The query string of a queue request: only the parameters that are set. */
export function caseQueryString(q: Partial<CaseListParams>): string {
  const params = new URLSearchParams();
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null && v !== '') params.set(k, String(v));
  return params.toString();
}

/** One page of the queue; the previous page stays on screen while the next loads. */
export function useCaseList(q: Partial<CaseListParams>) {
  const qs = caseQueryString(q);
  return useQuery({ queryKey: ['cases', qs], queryFn: () => apiGet(`/api/cases?${qs}`, CaseListSchema), placeholderData: keepPreviousData });
}

/** Address of the XLSX export of the queue with these filters (supervisor). */
export function exportUrl(q: Partial<CaseListParams>): string {
  const { page: _p, pageSize: _s, ...filters } = q;
  return `${API_BASE}/api/cases/export.xlsx?${caseQueryString(filters)}`;
}

/** One case with everything the case screen shows. */
export function useCase(id: string) {
  return useQuery({ queryKey: ['case', id], queryFn: () => apiGet(`/api/cases/${id}`, CaseDetailSchema), enabled: !!id });
}

/** Active examiners (for filters and assignment). */
export function useExaminers() {
  return useQuery({ queryKey: ['examiners'], queryFn: () => apiGet('/api/examiners', ExaminerListSchema), staleTime: 60_000 });
}

/** After a change: the case, the queue pages and the workload are stale. */
function useRefresh(id?: string) {
  const qc = useQueryClient();
  return async () => {
    await Promise.all([
      id ? qc.invalidateQueries({ queryKey: ['case', id] }) : Promise.resolve(),
      qc.invalidateQueries({ queryKey: ['cases'] }),
      qc.invalidateQueries({ queryKey: ['workload'] }),
    ]);
  };
}

/** Claims an open case for the signed-in examiner. */
export function useClaim(id: string) {
  const refresh = useRefresh(id);
  return useMutation({ mutationFn: () => apiSend('POST', `/api/cases/${id}/claim`, undefined, CaseChangedSchema), onSuccess: refresh });
}

/** Gives the case to an examiner (supervisor). */
export function useAssign(id: string) {
  const refresh = useRefresh(id);
  return useMutation({ mutationFn: (assigneeId: string) => apiSend('POST', `/api/cases/${id}/assign`, { assigneeId }, CaseChangedSchema), onSuccess: refresh });
}

/** Moves the case (closing carries the outcome and, if adjusted, the amount). */
export function useTransition(id: string) {
  const refresh = useRefresh(id);
  return useMutation({ mutationFn: (body: TransitionRequest) => apiSend('POST', `/api/cases/${id}/transition`, body, CaseChangedSchema), onSuccess: refresh });
}

/** Appends a note. */
export function useAddNote(id: string) {
  const refresh = useRefresh(id);
  return useMutation({ mutationFn: (text: string) => apiSend('POST', `/api/cases/${id}/notes`, { text }, CaseNoteSchema), onSuccess: refresh });
}

/** Asks for the full TIN (the server logs it); the answer is kept only in the screen's state. */
export function useRevealTin(id: string) {
  return useMutation({ mutationFn: () => apiSend('POST', `/api/cases/${id}/reveal-tin`, undefined, RevealedTinSchema) });
}

/** Moves a selection of cases to one examiner (supervisor). */
export function useBulkReassign() {
  const refresh = useRefresh();
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: BulkReassign) => apiSend('POST', '/api/cases/reassign', body, BulkReassignResultSchema),
    onSuccess: async () => {
      await refresh();
      await qc.invalidateQueries({ queryKey: ['case'] });
    },
  });
}

/** Reopens a finished case with a reason (supervisor, issue 14). */
export function useReopen(id: string) {
  const refresh = useRefresh(id);
  return useMutation({ mutationFn: (reason: string) => apiSend('POST', `/api/cases/${id}/reopen`, { reason }, CaseChangedSchema), onSuccess: refresh });
}
