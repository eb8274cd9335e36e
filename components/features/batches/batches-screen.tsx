import { Link } from 'expo-router';
import { useState } from 'react';
import { Pressable, View } from 'react-native';
import { useSession } from '../../../hooks/use-session';
import { can } from '../../../shared/permissions';
import { checkBatchLabel, sizeText, type BatchSummary } from '../../../shared/returns/batch-rows';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { Field } from '../../ui/field';
import { useIsWide } from '../../ui/layout';
import { ProgressBar } from '../../ui/progress-bar';
import { TableHeader } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { num, ScoringProgress, StateChip, when } from './batch-parts';
import { FilePicker } from './file-picker';
import { partsFromFiles, type PickedFile, type UploadOutcome } from './upload-batch';
import { useBatches, useUploadBatch } from './use-batches';

function UploadResult({ outcome }: { outcome: UploadOutcome }) {
  if (outcome.kind === 'accepted') {
    const c = outcome.batch.counts;
    return (
      <Card style={{ backgroundColor: colours.okSoft, borderColor: colours.ok, gap: space.xs }} testID="upload-accepted">
        <Txt bold tone="ok">
          Accepted and stored: {num(c.returns)} returns, {num(c.lineItems)} line items, {num(c.statements)} statements.
        </Txt>
        {outcome.batch.amendedReturns > 0 && (
          <Txt variant="small">{num(outcome.batch.amendedReturns)} of them amend returns already on file (see the batch).</Txt>
        )}
        <Link href={`/batches/${outcome.batch.id}`}>
          <Txt bold tone="brass">
            Open the batch and follow its scoring →
          </Txt>
        </Link>
      </Card>
    );
  }
  if (outcome.kind === 'rejected') {
    const r = outcome.report;
    return (
      <Card style={{ backgroundColor: colours.alertSoft, borderColor: colours.alert, gap: space.xs }} testID="upload-rejected">
        <Txt bold tone="alert">
          {r.error}
        </Txt>
        {r.batchId ? (
          <Link href={`/batches/${r.batchId}`} testID="upload-rejected-report">
            <Txt bold tone="brass">
              See every problem, row by row →
            </Txt>
          </Link>
        ) : (
          r.errors.map((e, i) => (
            <Txt key={i} variant="small">
              {e.file ? `${e.file}: ` : ''}
              {e.message}
            </Txt>
          ))
        )}
      </Card>
    );
  }
  if (outcome.kind === 'duplicate') {
    return (
      <Card style={{ backgroundColor: colours.warnSoft, borderColor: colours.warn, gap: space.xs }} testID="upload-duplicate">
        <Txt bold tone="warn">
          {outcome.message}
        </Txt>
        <Link href={`/batches/${outcome.batchId}`}>
          <Txt bold tone="brass">
            Open the earlier batch →
          </Txt>
        </Link>
      </Card>
    );
  }
  return (
    <Card style={{ backgroundColor: colours.alertSoft }} testID="upload-failed">
      <Txt tone="alert">{outcome.message}</Txt>
    </Card>
  );
}

function UploadCard() {
  const [files, setFiles] = useState<PickedFile[]>([]);
  const [label, setLabel] = useState('');
  const upload = useUploadBatch();
  const sorted = partsFromFiles(files);
  const sending = upload.isPending;
  // Checked as typed with the server's own rule, so the error shows on the field before Upload.
  const labelCheck = checkBatchLabel(label);
  const labelError = 'problem' in labelCheck ? labelCheck.problem : undefined;
  return (
    <Card style={{ gap: space.md }}>
      <View style={{ gap: 2 }}>
        <Txt variant="lead" bold>
          Upload a batch
        </Txt>
        <Txt variant="small" tone="soft">
          One .xlsx workbook with the sheets returns and line_items (and statements), or the CSV files returns.csv and line_items.csv (and statements.csv).
          Every row is checked; a batch with any error is refused whole and nothing of it is stored.
        </Txt>
      </View>
      <View style={{ maxWidth: 520 }}>
        <Field
          testID="batch-label"
          label="Label (optional)"
          hint="What the office calls this batch, e.g. “Post room, March returns”. Left blank, it is named by its number, date and source, e.g. “Batch 12 · 2 Dec 2026 · workbook”."
          placeholder="e.g. Post room, March returns"
          value={label}
          maxLength={120}
          onChangeText={(t) => {
            setLabel(t);
            upload.reset();
          }}
          error={labelError}
          editable={!sending}
        />
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center' }}>
        <FilePicker
          testID="batch-files"
          disabled={sending}
          onPick={(f) => {
            setFiles(f);
            upload.reset();
          }}
        />
        <Button
          testID="batch-upload"
          label={sending ? 'Uploading…' : 'Upload and check'}
          busy={sending}
          disabled={!('parts' in sorted) || !!labelError}
          onPress={() => 'parts' in sorted && !labelError && upload.mutate({ parts: sorted.parts, label })}
        />
      </View>
      {files.length > 0 && (
        <View style={{ gap: 2 }} testID="batch-chosen">
          {files.map((f) => (
            <Txt key={f.name} variant="small" figures>
              {f.name} · {sizeText(f.size)}
            </Txt>
          ))}
          {'problem' in sorted && (
            <Txt variant="small" tone="alert">
              {sorted.problem}
            </Txt>
          )}
        </View>
      )}
      {sending && (
        <View style={{ gap: space.xs }} testID="upload-progress">
          <ProgressBar value={upload.progress} label="Upload progress" tone="brass" />
          <Txt variant="caption" figures tone="soft">
            {upload.progress < 1 ? `sending… ${Math.round(upload.progress * 100)} %` : 'sent; checking every row…'}
          </Txt>
        </View>
      )}
      {upload.data && <UploadResult outcome={upload.data} />}
    </Card>
  );
}

function BatchRow({ b, wide }: { b: BatchSummary; wide: boolean }) {
  const counts =
    b.state === 'rejected'
      ? `${num(b.errorCount)} error${b.errorCount === 1 ? '' : 's'}`
      : `${num(b.counts.returns)} returns · ${num(b.counts.lineItems)} lines`;
  const files = b.fileNames.join(', ');
  const who = b.loadedBy?.displayName ?? '—';
  const checking = b.state === 'validating' || b.state === 'received';
  const progress = checking ? (
    <Txt variant="caption" figures tone={b.stalled ? 'alert' : 'soft'} testID={`batch-row-check-${b.id}`}>
      {b.stalled ? 'stalled: open it to retry' : `${num(b.rowsChecked)} rows checked`}
    </Txt>
  ) : null;
  const inner = wide ? (
    <View style={{ flexDirection: 'row', gap: space.md, alignItems: 'center', paddingVertical: space.sm, paddingHorizontal: space.md }}>
      <View style={{ width: 160 }}>
        <StateChip state={b.state} />
      </View>
      <View style={{ flex: 1 }}>
        <Txt variant="small" bold numberOfLines={1}>
          {b.label}
        </Txt>
        <Txt variant="caption" tone="soft" numberOfLines={1}>
          {when(b.createdAt)} · {who} · {files}
        </Txt>
      </View>
      <View style={{ width: 200 }}>
        <Txt variant="small" figures tone={b.state === 'rejected' ? 'alert' : 'ink'}>
          {counts}
        </Txt>
      </View>
      <View style={{ width: 180 }}>{checking ? progress : b.state !== 'rejected' && <ScoringProgress batch={b} />}</View>
    </View>
  ) : (
    <Card style={{ gap: space.xs, padding: space.md }}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm }}>
        <StateChip state={b.state} />
        <Txt variant="caption" tone="soft">
          {when(b.createdAt)}
        </Txt>
      </View>
      <Txt variant="small" bold numberOfLines={2}>
        {b.label}
      </Txt>
      <Txt variant="small" figures tone={b.state === 'rejected' ? 'alert' : 'ink'}>
        {counts}
      </Txt>
      <Txt variant="caption" tone="soft" numberOfLines={1}>
        uploaded by {who} · {files}
      </Txt>
      {checking ? progress : b.state !== 'rejected' && <ScoringProgress batch={b} />}
    </Card>
  );
  return (
    <Link href={`/batches/${b.id}`} asChild>
      <Pressable accessibilityRole="link" testID={`batch-row-${b.id}`} style={wide ? { borderBottomWidth: 1, borderBottomColor: colours.line } : undefined}>
        {inner}
      </Pressable>
    </Link>
  );
}

/** The intake clerk's screen: upload a batch, see every batch and where it stands. */
export function BatchesScreen() {
  const wide = useIsWide();
  const [page, setPage] = useState(1);
  const list = useBatches(page);
  const session = useSession();
  const mayUpload = session.data ? can(session.data.user.role, 'uploadBatches') : false;
  const pages = list.data ? Math.max(1, Math.ceil(list.data.total / list.data.pageSize)) : 1;
  return (
    <View style={{ gap: space.lg }}>
      <View style={{ gap: space.xs }}>
        <Txt variant="display" bold accessibilityRole="header">
          Batches
        </Txt>
        <Txt tone="soft">
          Filed returns come in here: checked row by row, stored whole or not at all, then scored.
          {mayUpload || !session.data ? '' : ' Intake clerks upload batches; you can follow them here.'}
        </Txt>
      </View>
      {mayUpload && <UploadCard />}
      <Txt variant="lead" bold accessibilityRole="header">
        Batches on file
      </Txt>
      {list.isPending && <Txt tone="soft">Loading…</Txt>}
      {list.error && <Txt tone="alert">{list.error.message}</Txt>}
      {list.data && list.data.items.length === 0 && <Txt tone="soft">No batch has been uploaded yet.</Txt>}
      {list.data && list.data.items.length > 0 && (
        <View
          testID="batch-list"
          style={wide ? { backgroundColor: colours.surface, borderWidth: 1, borderColor: colours.line, borderRadius: radius.md } : { gap: space.sm }}
        >
          {wide && (
            <TableHeader
              columns={[
                ['State', 160],
                ['Batch · uploaded by · files', 0],
                ['Contents', 200],
                ['Scoring', 180],
              ]}
            />
          )}
          {list.data.items.map((b) => (
            <BatchRow key={b.id} b={b} wide={wide} />
          ))}
        </View>
      )}
      {pages > 1 && (
        <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center' }}>
          <Button kind="secondary" label="Newer" disabled={page <= 1} onPress={() => setPage(page - 1)} />
          <Txt variant="small" figures>
            page {page} of {pages}
          </Txt>
          <Button kind="secondary" label="Older" disabled={page >= pages} onPress={() => setPage(page + 1)} />
        </View>
      )}
    </View>
  );
}
