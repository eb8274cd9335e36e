/** react-query hooks of the working papers kept with a case (server/analyses/case-analyses.routes.ts). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { SavedAnalysisListSchema, SavedAnalysisSchema, type SaveAnalysisRequest } from '../../../shared/analyses';
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

/** Where the PDF working paper of a saved analysis is downloaded. */
export function analysisPdfUrl(caseId: string, analysisId: string): string {
  return `/api/cases/${caseId}/analyses/${analysisId}/pdf`;
}
