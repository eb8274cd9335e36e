import { useState } from 'react';
import { Linking, Platform, View } from 'react-native';
import { API_BASE, ApiError } from '../../../hooks/api-client';
import { ACCESS_ACTION_WORDS, ACCESS_ACTIONS, AccessLogExportQuerySchema, type AccessLogEntry, type AccessLogExportQuery } from '../../../shared/access-log';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { useIsWide } from '../../ui/layout';
import { TableHeader } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { useAccessLog } from './use-access-log';

/** "2026-12-02 09:14:05" in the viewer's time zone. */
function when(iso: string) {
  const d = new Date(iso);
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())} ${p(d.getHours())}:${p(d.getMinutes())}:${p(d.getSeconds())}`;
}

/** The time of a row: one instant, or from–to when the action spanned several reads. */
function span(e: AccessLogEntry) {
  if (e.firstAt === e.at) return when(e.at);
  const a = when(e.firstAt);
  const b = when(e.at);
  return a.slice(0, 10) === b.slice(0, 10) ? `${a}–${b.slice(11)}` : `${a} – ${b}`;
}

/** The wide table's columns: heading and width (0: the rest of the row), in cell order. */
const COLS = [
  ['When', 190],
  ['Who', 140],
  ['What was done', 0],
  ['Return', 150],
  ['Taxpayer', 110],
] as const;

function Row({ e, wide }: { e: AccessLogEntry; wide: boolean }) {
  const at = (
    <Txt variant="small" figures>
      {span(e)}
    </Txt>
  );
  const who = (
    <View>
      <Txt variant="small" bold>
        {e.username ?? (e.action === 'sign-in-refused' ? '(not signed in)' : '(taxpayer or system)')}
      </Txt>
      {e.role && (
        <Txt variant="caption" tone="soft">
          {e.role}
        </Txt>
      )}
    </View>
  );
  const what = (
    <View>
      <Txt variant="small" tone={e.action === 'sign-in-refused' ? 'alert' : 'ink'} testID="log-summary">
        {e.summary}
      </Txt>
      {e.lines > 1 && (
        <Txt variant="caption" tone="soft">
          {e.lines} log lines
        </Txt>
      )}
    </View>
  );
  const ref = (
    <Txt variant="small" figures>
      {e.returnRef ?? '—'}
    </Txt>
  );
  const taxpayer = (
    <Txt variant="small" figures>
      {e.taxpayerLabel ?? '—'}
    </Txt>
  );
  if (!wide) {
    return (
      <Card style={{ gap: 4, padding: space.md }} testID="log-row">
        <View style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm }}>
          {who}
          {at}
        </View>
        {what}
        {(e.returnRef || e.taxpayerLabel) && (
          <Txt variant="caption" figures tone="soft">
            {[e.returnRef, e.taxpayerLabel].filter(Boolean).join(' · ')}
          </Txt>
        )}
      </Card>
    );
  }
  return (
    <View
      testID="log-row"
      style={{
        flexDirection: 'row',
        gap: space.md,
        paddingVertical: space.sm,
        paddingHorizontal: space.md,
        borderBottomWidth: 1,
        borderBottomColor: colours.line,
      }}
    >
      {[at, who, what, ref, taxpayer].map((c, i) => (
        <View key={i} style={COLS[i][1] ? { width: COLS[i][1] } : { flex: 1 }}>
          {c}
        </View>
      ))}
    </View>
  );
}

type Draft = { user: string; taxpayer: string; from: string; to: string; action: string };

/** How many days the screen shows at first: grouping a whole year of lines takes seconds. */
const DEFAULT_DAYS = 7;

/** The filters the screen opens with: the last {@link DEFAULT_DAYS} days (today included). */
function startingDraft(): Draft {
  const d = new Date(Date.now() - (DEFAULT_DAYS - 1) * 86_400_000);
  const p = (n: number) => String(n).padStart(2, '0');
  return { user: '', taxpayer: '', from: `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())}`, to: '', action: 'any' };
}

/** The draft as the API's query (blank fields left out), or every field's problem. */
function checkDraft(d: Draft): { query: AccessLogExportQuery } | { issues: Record<string, string> } {
  const raw = Object.fromEntries(Object.entries(d).filter(([k, v]) => v.trim() !== '' && !(k === 'action' && v === 'any')));
  const r = AccessLogExportQuerySchema.safeParse(raw);
  if (r.success) return { query: r.data };
  const issues: Record<string, string> = {};
  for (const i of r.error.issues) issues[String(i.path[0])] ??= i.message;
  return { issues };
}

/** The server's field errors (422), by field. */
function serverIssues(error: unknown): Record<string, string> {
  if (!(error instanceof ApiError) || error.status !== 422) return {};
  const body = error.body as { issues?: { path: string; message: string }[] } | null;
  return Object.fromEntries((body?.issues ?? []).map((i) => [i.path, i.message]));
}

function download(url: string) {
  // The server sends the workbook as an attachment, so the page stays where it is.
  if (Platform.OS === 'web') window.location.assign(API_BASE + url);
  else void Linking.openURL(API_BASE + url);
}

/** The administrator's view of who saw or changed what: one row per thing a person did. */
export function AccessLogScreen() {
  const wide = useIsWide();
  const [draft, setDraft] = useState<Draft>(startingDraft);
  const [filters, setFilters] = useState<AccessLogExportQuery>(() => ({ from: startingDraft().from }));
  const [shownIssues, setShownIssues] = useState<Record<string, string>>({});
  const [page, setPage] = useState(1);
  const log = useAccessLog({ ...filters, page, pageSize: 50 });
  const pages = log.data ? Math.max(1, Math.ceil(log.data.total / log.data.pageSize)) : 1;
  const fromServer = serverIssues(log.error);
  const issues = { ...fromServer, ...shownIssues };
  const apply = (next: Draft) => {
    const checked = checkDraft(next);
    if ('issues' in checked) {
      setShownIssues(checked.issues);
      return;
    }
    setShownIssues({});
    setPage(1);
    setFilters(checked.query);
  };
  const setField = (k: keyof Draft, v: string) => {
    const next = { ...draft, [k]: v };
    setDraft(next);
    // An error shown goes away as soon as the field is right.
    if (shownIssues[k]) {
      const checked = checkDraft(next);
      setShownIssues('issues' in checked ? checked.issues : {});
    }
  };
  const exportQuery = new URLSearchParams(Object.entries(filters).filter(([, v]) => v) as [string, string][]).toString();
  return (
    <View style={{ gap: space.lg }}>
      <View>
        <Txt variant="display" bold accessibilityRole="header">
          Access log
        </Txt>
        <Txt tone="soft">
          Every view and change of taxpayer data and every sign-in, one row per thing a person did: the reads behind one screen are one row. Rows cannot be
          edited or removed.
        </Txt>
      </View>
      <Card style={{ gap: space.md }}>
        <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.md, alignItems: wide ? 'flex-start' : 'stretch' }}>
          {(
            [
              ['user', 'Person', 'user name'],
              ['taxpayer', 'Taxpayer', 'last 3 digits of the TIN'],
              ['from', 'From', 'YYYY-MM-DD'],
              ['to', 'To', 'YYYY-MM-DD'],
            ] as const
          ).map(([k, label, ph]) => (
            <View key={k} style={{ flex: wide ? 1 : undefined }}>
              <Field
                testID={`log-filter-${k}`}
                label={label}
                placeholder={ph}
                autoCapitalize="none"
                value={draft[k]}
                error={issues[k]}
                onChangeText={(v) => setField(k, v)}
                onSubmitEditing={() => apply(draft)}
              />
            </View>
          ))}
        </View>
        <ChoiceRow
          testID="log-filter-action"
          label="Action"
          options={[{ value: 'any', label: 'Any' }, ...ACCESS_ACTIONS.map((a) => ({ value: a, label: ACCESS_ACTION_WORDS[a] }))]}
          value={draft.action}
          onChange={(v) => {
            const next = { ...draft, action: v };
            setDraft(next);
            apply(next);
          }}
        />
        {issues.action && (
          <Txt variant="small" tone="alert">
            {issues.action}
          </Txt>
        )}
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          <Button testID="log-filter-apply" label="Filter" onPress={() => apply(draft)} />
          <Button
            testID="log-filter-clear"
            kind="secondary"
            label={`Clear (last ${DEFAULT_DAYS} days)`}
            onPress={() => {
              const start = startingDraft();
              setDraft(start);
              apply(start);
            }}
          />
          <Button
            testID="log-export"
            kind="secondary"
            label="Export these rows (.xlsx)"
            disabled={Object.keys(issues).length > 0}
            onPress={() => download(`/api/access-log/export.xlsx${exportQuery ? `?${exportQuery}` : ''}`)}
          />
        </View>
        <Txt variant="caption" tone="soft">
          The export holds the rows the filters select, newest first, and is itself recorded in this log.
        </Txt>
      </Card>
      {log.error && Object.keys(fromServer).length === 0 && <Txt tone="alert">{log.error.message}</Txt>}
      {log.data && (
        <>
          <Txt variant="small" tone="soft" testID="log-total">
            {log.data.total.toLocaleString('en-GB')} row{log.data.total === 1 ? '' : 's'}
          </Txt>
          <View
            style={{
              gap: wide ? 0 : space.sm,
              backgroundColor: wide ? colours.surface : 'transparent',
              borderWidth: wide ? 1 : 0,
              borderColor: colours.line,
              borderRadius: 8,
            }}
          >
            {wide && <TableHeader columns={COLS} />}
            {log.data.items.map((e) => (
              <Row key={e.id} e={e} wide={wide} />
            ))}
          </View>
          <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center' }}>
            <Button kind="secondary" label="Newer" disabled={page <= 1} onPress={() => setPage(page - 1)} />
            <Txt variant="small" figures>
              page {page} of {pages}
            </Txt>
            <Button kind="secondary" label="Older" disabled={page >= pages} onPress={() => setPage(page + 1)} />
          </View>
        </>
      )}
    </View>
  );
}
