/**
 * react-query hooks of the working papers kept with a case (server/analyses/case-analyses.routes.ts)
 * and of the pools from the returns on file (server/analyses/analyses.routes.ts).
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import {
  PoolAnalysisSchema,
  PoolChoicesSchema,
  SavedAnalysisListSchema,
  SavedAnalysisSchema,
  type AnalysisPool,
  type SaveAnalysisRequest,
} from '../../../shared/analyses';
import { apiGet, apiSend } from '../../../hooks/api-client';

const key = (caseId: string) => ['case-analyses', caseId];

/** The saved analyses of a case, oldest first. */
export function useCaseAnalyses(caseId: string) {
  return useQuery({ queryKey: key(caseId), queryFn: () => apiGet(`/api/cases/${caseId}/analyses`, SavedAnalysisListSchema) });
}

/** Runs and saves a digit analysis of a reply file's column. */
export function useSaveAnalysis(caseId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SaveAnalysisRequest) => apiSend('POST', `/api/cases/${caseId}/analyses`, body, SavedAnalysisSchema),
    onSuccess: () => qc.invalidateQueries({ queryKey: key(caseId) }),
  });
}

/** Where the working paper of a saved analysis is downloaded, as PDF or XLSX. */
export function analysisPaperUrl(caseId: string, analysisId: string, format: 'pdf' | 'xlsx'): string {
  return `/api/cases/${caseId}/analyses/${analysisId}/${format}`;
}

/** What the pool pickers offer (preparers, batches, tax years). */
export function usePoolChoices(enabled: boolean) {
  return useQuery({ queryKey: ['analysis-pools'], queryFn: () => apiGet('/api/analyses/pools', PoolChoicesSchema), enabled });
}

/** Runs the digit analysis of a pool without keeping it. */
export function useAnalysePool() {
  return useMutation({ mutationFn: (pool: AnalysisPool) => apiSend('POST', '/api/analyses/digits/pool', { pool }, PoolAnalysisSchema) });
}
