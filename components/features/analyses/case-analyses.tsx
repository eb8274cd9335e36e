/**
 * Saved digit analyses (working papers) on the case screen (issue 15): the list with each
 * paper's source, who ran it and when, and its headline figures, links to the PDF and the
 * XLSX workbook, and for the case's examiner a form to analyse a column of a CSV or XLSX file
 * the taxpayer sent, and a link to the Digit analysis screen opened for this case (a pool of
 * the returns on file, or a reply file, kept with the case from there).
 * Mounted in the case screen with one line: `<CaseAnalyses caseId={d.id} canAct={d.actions.canAct} />`.
 */
import { Link } from 'expo-router';
import { useState } from 'react';
import { Linking, Platform, View } from 'react-native';
import { space } from '../../theme';
import { Button } from '../../ui/button';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { Txt } from '../../ui/text';
import { Section } from '../cases/case-section';
import { useLetters } from '../letters/use-letters';
import { dataFileEnding } from '../../../shared/analyses';
import { analysisPaperUrl, useCaseAnalyses, useSaveAnalysis } from './use-analyses';

const VERDICT: Record<string, string> = {
  within_expected: 'within the expected range',
  elevated: 'above the expected range',
  high: 'well above the expected range',
  too_few: 'too few amounts to judge',
};

function openPaper(url: string): void {
  if (Platform.OS === 'web') window.open(url, '_blank', 'noopener');
  else void Linking.openURL(url);
}

/** The working papers of a case and, for whoever may act on it, the form to add one. */
export function CaseAnalyses({ caseId, canAct }: { caseId: string; canAct: boolean }) {
  const list = useCaseAnalyses(caseId);
  const letters = useLetters(caseId);
  const save = useSaveAnalysis(caseId);
  const files = (letters.data?.items ?? []).flatMap((l) => l.documentRequest?.uploads ?? []).filter((u) => dataFileEnding(u.contentType) !== null);
  const [uploadId, setUploadId] = useState<string | undefined>(undefined);
  const [column, setColumn] = useState('');
  const [by, setBy] = useState('');
  const analyses = list.data?.analyses ?? [];

  return (
    <Section title="Digit analyses" testID="case-analyses" right={<Txt tone="soft">{analyses.length}</Txt>}>
      <Txt variant="small" tone="soft">
        A departure from the expected digits selects figures for a closer look; it proves nothing by itself.
      </Txt>
      {list.isError && <Txt tone="alert">{list.error.message}</Txt>}
      {analyses.length === 0 && !list.isLoading && <Txt tone="soft">No analysis kept with this case yet.</Txt>}
      {analyses.map((a) => {
        const fd = a.result.firstDigit;
        const sa = a.result.sizeAware;
        const level = fd.conformity === 'too_few' ? `size-aware: ${VERDICT[sa.verdict]}` : `first digit ${fd.conformity}`;
        return (
          <View key={a.id} style={{ gap: 2 }} testID="case-analysis">
            <Txt bold>{a.sourceLabel}</Txt>
            <Txt variant="small">{`${a.what} · ${a.result.count.toLocaleString('en-GB')} amounts · MAD ${fd.mad === null ? '—' : fd.mad.toFixed(4)} (${level})`}</Txt>
            <Txt
              variant="small"
              tone="soft"
            >{`${a.createdBy.name}, ${a.createdAt.slice(0, 16).replace('T', ' ')} UTC${a.sha256 ? ` · SHA-256 ${a.sha256.slice(0, 12)}…` : ''}`}</Txt>
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
              <Button kind="quiet" label="Working paper (PDF)" onPress={() => openPaper(analysisPaperUrl(caseId, a.id, 'pdf'))} />
              <Button kind="quiet" label="Working paper (XLSX)" onPress={() => openPaper(analysisPaperUrl(caseId, a.id, 'xlsx'))} testID="case-analysis-xlsx" />
            </View>
          </View>
        );
      })}
      {canAct && (
        <Link href={{ pathname: '/analysis', params: { caseId } }} testID="case-analyses-open-screen">
          <Txt tone="brass" bold>
            Analyse a pool of returns or a reply file for this case →
          </Txt>
        </Link>
      )}
      {canAct && files.length > 0 && (
        <View style={{ gap: space.sm }}>
          <ChoiceRow
            label="Received file to analyse"
            options={files.map((f) => ({ value: f.id, label: f.fileName }))}
            value={uploadId}
            onChange={setUploadId}
            testID="analysis-file"
          />
          <Field label="Amount column" value={column} onChangeText={setColumn} placeholder="amount" testID="analysis-column" />
          <Field label="Split by (optional)" value={by} onChangeText={setBy} placeholder="account" testID="analysis-by" />
          {save.isError && (
            <Txt tone="alert" accessibilityRole="alert">
              {save.error.message}
            </Txt>
          )}
          <Button
            label="Analyse and keep with the case"
            busy={save.isPending}
            disabled={!uploadId}
            onPress={() => uploadId && save.mutate({ source: { uploadId }, column: column.trim() || null, by: by.trim() || null })}
            testID="analysis-save"
          />
        </View>
      )}
    </Section>
  );
}
