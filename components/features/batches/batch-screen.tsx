import { Link, useLocalSearchParams } from 'expo-router';
import { useMemo, useState } from 'react';
import { Linking, Platform, View } from 'react-native';
import { INTAKE_SLOW_AFTER_SECONDS, INTAKE_STALLED_AFTER_SECONDS, type BatchDetail, type BatchIssue } from '../../../shared/returns/batch-rows';
import { can } from '../../../shared/permissions';
import { API_BASE } from '../../../hooks/api-client';
import { useSession } from '../../../hooks/use-session';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { HeaderLabel, TableHeader } from '../../ui/table-header-row';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { ConfirmDialog } from '../../ui/confirm-dialog';
import { num, ScoringProgress, StateChip, when } from './batch-parts';
import { ScoreBandsChart } from './score-chart';
import { reportUrl, useBatch, useRetryBatch } from './use-batches';

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

/** "3 min 20 s" */
function duration(seconds: number): string {
  if (seconds < 60) return `${seconds} s`;
  const m = Math.floor(seconds / 60);
  if (m < 60) return `${m} min ${seconds % 60} s`;
  return `${Math.floor(m / 60)} h ${m % 60} min`;
}

/**
 * A batch being checked: while it is quick, one line; once it runs longer than expected, how
 * long and how many rows so far; once stalled, says so and offers to end it so the file can be
 * uploaded again (the server keeps no copy of the files to run it again by itself).
 */
function Checking({ batch }: { batch: BatchDetail }) {
  const retry = useRetryBatch(batch.id);
  const [asking, setAsking] = useState(false);
  if (batch.stalled) {
    return (
      <Card style={{ backgroundColor: colours.alertSoft, borderColor: colours.alert, gap: space.sm }} testID="batch-stalled">
        <Txt bold tone="alert">
          This check has stalled: no row has been read for over {INTAKE_STALLED_AFTER_SECONDS / 60} minutes ({num(batch.rowsChecked)} rows checked in{' '}
          {duration(batch.elapsedSeconds)}). It will not finish by itself.
        </Txt>
        <Txt variant="small">Nothing of this batch has been stored. End this attempt, then upload the same file again.</Txt>
        <View style={{ flexDirection: 'row' }}>
          <Button testID="batch-retry" label="End it and upload again" onPress={() => setAsking(true)} />
        </View>
        {asking && (
          <ConfirmDialog
            title="End this stalled check?"
            consequence="The batch is marked as not finished and nothing of it is stored. Its file is freed, so you can upload the same file again at once."
            confirmLabel="End the check"
            kind="danger"
            busy={retry.isPending}
            error={retry.error?.message ?? null}
            onCancel={() => setAsking(false)}
            onConfirm={() => retry.mutate(undefined, { onSuccess: () => setAsking(false) })}
          />
        )}
      </Card>
    );
  }
  const slow = batch.elapsedSeconds >= INTAKE_SLOW_AFTER_SECONDS;
  return (
    <Card style={{ gap: space.xs }} testID="batch-checking">
      <Txt bold>Every row is being checked…</Txt>
      <Txt variant="small" figures tone="soft" testID="batch-checking-progress">
        {slow
          ? `${num(batch.rowsChecked)} rows checked so far · ${duration(batch.elapsedSeconds)} since the upload. Large batches take a few minutes.`
          : `${num(batch.rowsChecked)} rows checked so far.`}
      </Txt>
    </Card>
  );
}

/** What scoring made of the batch: cases opened, the spread of scores, and a way to the cases. */
function Outcome({ batch }: { batch: BatchDetail }) {
  const session = useSession();
  const mayOpenCases = session.data ? can(session.data.user.role, 'readCases') : false;
  const o = batch.outcome;
  if (!o) return null;
  return (
    <Card style={{ gap: space.md }} testID="batch-outcome">
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xl }}>
        <Fact label="Cases opened" value={num(o.casesOpened)} testID="batch-cases-opened" />
        <Fact label="Median score" value={o.median === null ? '—' : o.median.toFixed(1)} />
        {o.failed > 0 && <Fact label="Scores not computed" value={num(o.failed)} />}
      </View>
      {mayOpenCases ? (
        <Link href={{ pathname: '/queue', params: { batch: batch.id, state: 'all' } }} testID="batch-cases-link">
          <Txt bold tone="brass">
            Open its {num(o.casesOpened)} case{o.casesOpened === 1 ? '' : 's'} in the queue →
          </Txt>
        </Link>
      ) : (
        <Txt variant="small" tone="soft" testID="batch-cases-note">
          Examiners and supervisors work these cases in the queue.
        </Txt>
      )}
      <ScoreBandsChart outcome={o} testID="batch-score-chart" />
    </Card>
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
            <Txt variant="display" bold accessibilityRole="header" numberOfLines={2} testID="batch-label">
              {b.label}
            </Txt>
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', flexWrap: 'wrap' }}>
              <StateChip state={b.state} testID="batch-state" />
              <Txt variant="small" tone="soft">
                Batch {b.batchNo} · uploaded {when(b.createdAt)} by {b.loadedBy?.displayName ?? '—'}
              </Txt>
            </View>
            <Txt variant="caption" tone="soft" numberOfLines={2}>
              Files: {b.fileNames.join(', ')}
            </Txt>
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
              {(b.state === 'validating' || b.state === 'received') && <Checking batch={b} />}
              {b.state === 'scored' && <Outcome batch={b} />}
              {b.state !== 'validating' && b.state !== 'received' && (
                <View style={{ flexDirection: 'row' }}>
                  <Button testID="batch-report-download" kind="secondary" label="Download the batch report (.xlsx)" onPress={() => download(reportUrl(b.id))} />
                </View>
              )}
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
