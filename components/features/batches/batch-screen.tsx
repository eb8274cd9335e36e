import { Link, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { Linking, Platform, View } from 'react-native';
import type { BatchDetail, BatchIssue } from '../../../shared/returns/batch-rows';
import { API_BASE } from '../../../hooks/api-client';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { HeaderLabel, TableHeader } from '../../ui/table-header-row';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { num, ScoringProgress, StateChip, when } from './batch-parts';
import { reportUrl, useBatch } from './use-batches';

function download(url: string) {
  // The server sends the workbook as an attachment, so the page stays where it is.
  if (Platform.OS === 'web') window.location.assign(API_BASE + url);
  else void Linking.openURL(API_BASE + url);
}

function Fact({ label, value, testID }: { label: string; value: string; testID?: string }) {
  return (
    <View style={{ minWidth: 120, gap: 2 }}>
      <HeaderLabel>{label}</HeaderLabel>
      <Txt variant="lead" figures bold testID={testID}>
        {value}
      </Txt>
    </View>
  );
}

const COLS = [
  ['File', 170],
  ['Row', 56],
  ['Column', 120],
  ['Value', 150],
  ['What to fix', 0],
] as const;

function IssueTable({ issues, wide, testID }: { issues: BatchIssue[]; wide: boolean; testID: string }) {
  if (!wide) {
    return (
      <View style={{ gap: space.sm }} testID={testID}>
        {issues.map((e, i) => (
          <Card key={i} style={{ padding: space.md, gap: 2 }} testID={`${testID}-row`}>
            <Txt variant="caption" figures tone="soft">
              {[e.file, e.row !== null ? `row ${e.row}` : null, e.column].filter(Boolean).join(' · ')}
            </Txt>
            {e.value ? (
              <Txt variant="small" figures>
                {JSON.stringify(e.value)}
              </Txt>
            ) : null}
            <Txt variant="small">{e.message}</Txt>
          </Card>
        ))}
      </View>
    );
  }
  return (
    <View style={{ backgroundColor: colours.surface, borderWidth: 1, borderColor: colours.line, borderRadius: radius.md }} testID={testID}>
      <TableHeader columns={COLS} />
      {issues.map((e, i) => (
        <View
          key={i}
          testID={`${testID}-row`}
          style={{
            flexDirection: 'row',
            gap: space.md,
            paddingVertical: space.sm,
            paddingHorizontal: space.md,
            borderBottomWidth: 1,
            borderBottomColor: colours.line,
          }}
        >
          <View style={{ width: 170 }}>
            <Txt variant="small" numberOfLines={2}>
              {e.file}
            </Txt>
          </View>
          <View style={{ width: 56 }}>
            <Txt variant="small" figures>
              {e.row ?? '—'}
            </Txt>
          </View>
          <View style={{ width: 120 }}>
            <Txt variant="small" figures>
              {e.column ?? '—'}
            </Txt>
          </View>
          <View style={{ width: 150 }}>
            <Txt variant="small" figures numberOfLines={2}>
              {e.value ?? ''}
            </Txt>
          </View>
          <View style={{ flex: 1 }}>
            <Txt variant="small">{e.message}</Txt>
          </View>
        </View>
      ))}
    </View>
  );
}

/** The validation report: every error, filterable by file and by any text, downloadable as XLSX. */
function Report({ batch, wide }: { batch: BatchDetail; wide: boolean }) {
  const [query, setQuery] = useState('');
  const files = useMemo(() => [...new Set(batch.errors.map((e) => e.file).filter(Boolean))], [batch.errors]);
  const [file, setFile] = useState<string>('all');
  const shown = batch.errors.filter((e) => {
    if (file !== 'all' && e.file !== file && e.file !== '') return false;
    if (!query.trim()) return true;
    const q = query.trim().toLowerCase();
    return [e.file, e.column ?? '', e.value ?? '', e.message, e.row === null ? '' : String(e.row)].some((t) => t.toLowerCase().includes(q));
  });
  return (
    <View style={{ gap: space.md }}>
      <Card style={{ backgroundColor: colours.alertSoft, borderColor: colours.alert, gap: space.xs }}>
        <Txt bold tone="alert" testID="batch-rejected-summary">
          Rejected: {num(batch.errorCount)} problem{batch.errorCount === 1 ? '' : 's'} found. Nothing of this batch was stored.
        </Txt>
        <Txt variant="small">Fix the file where each line below says, then upload it again as a new batch.</Txt>
      </Card>
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.md, alignItems: wide ? 'flex-end' : 'stretch' }}>
        <View style={{ flex: wide ? 1 : undefined }}>
          <Field
            testID="report-filter"
            label="Filter"
            placeholder="column, value, row or words of the message"
            autoCapitalize="none"
            value={query}
            onChangeText={setQuery}
          />
        </View>
        <Button testID="report-download" kind="secondary" label="Download report (.xlsx)" onPress={() => download(reportUrl(batch.id))} />
      </View>
      {files.length > 1 && (
        <ChoiceRow
          label="File"
          testID="report-file"
          options={[{ value: 'all', label: 'All files' }, ...files.map((f) => ({ value: f, label: f }))]}
          value={file}
          onChange={setFile}
        />
      )}
      <Txt variant="small" tone="soft" testID="report-count">
        {shown.length === batch.errors.length
          ? `${num(shown.length)} line${shown.length === 1 ? '' : 's'}`
          : `${num(shown.length)} of ${num(batch.errors.length)} lines`}
      </Txt>
      <IssueTable issues={shown} wide={wide} testID="report" />
    </View>
  );
}

/** One batch: its validation report when rejected, or its counts and scoring progress. */
export function BatchScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const wide = useIsWide();
  const q = useBatch(String(id));
  const b = q.data;
  return (
    <View style={{ gap: space.lg }}>
      <Link href="/batches">
        <Txt tone="brass" bold>
          ← All batches
        </Txt>
      </Link>
      {q.isPending && <Txt tone="soft">Loading…</Txt>}
      {q.error && <Txt tone="alert">{q.error.message}</Txt>}
      {b && (
        <>
          <View style={{ gap: space.xs }}>
            <Txt variant="display" bold accessibilityRole="header" numberOfLines={2}>
              {b.fileNames.join(', ')}
            </Txt>
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' }}>
              <StateChip state={b.state} testID="batch-state" />
              <Txt variant="small" tone="soft">
                {b.format.toUpperCase()} · uploaded {when(b.createdAt)} by {b.loadedBy?.displayName ?? '—'}
              </Txt>
            </View>
          </View>
          {b.state === 'rejected' ? (
            <Report batch={b} wide={wide} />
          ) : (
            <>
              <Card style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xl }}>
                <Fact label="Returns" value={num(b.counts.returns)} testID="batch-returns" />
                <Fact label="Line items" value={num(b.counts.lineItems)} testID="batch-line-items" />
                <Fact label="Statements" value={num(b.counts.statements)} />
                <Fact label="Amended returns" value={num(b.amendedReturns)} />
              </Card>
              {(b.state === 'queued' || b.state === 'scoring' || b.state === 'scored') && (
                <Card style={{ gap: space.sm }}>
                  <Txt bold>Scoring</Txt>
                  <ScoringProgress batch={b} testID="batch-scoring" />
                </Card>
              )}
              {b.state === 'validating' && <Txt tone="soft">Every row is being checked…</Txt>}
              {b.notices.length > 0 && (
                <View style={{ gap: space.sm }}>
                  <Txt variant="lead" bold>
                    Notices
                  </Txt>
                  <Txt variant="small" tone="soft">
                    These did not stop the batch; they are here for the record.
                  </Txt>
                  <IssueTable issues={b.notices} wide={wide} testID="notices" />
                </View>
              )}
            </>
          )}
        </>
      )}
    </View>
  );
}
