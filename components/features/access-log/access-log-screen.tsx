import { useState } from 'react';
import { View } from 'react-native';
import type { AccessLogEntry } from '../../../shared/access-log';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { Field } from '../../ui/field';
import { useIsWide } from '../../ui/layout';
import { TableHeader } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { useAccessLog } from './use-access-log';

const ACTION_WORDS: Record<AccessLogEntry['action'], string> = {
  view: 'viewed',
  change: 'changed',
  export: 'exported',
  'sign-in': 'signed in',
  'sign-out': 'signed out',
  'sign-in-refused': 'sign-in refused',
  'reveal-tin': 'revealed full TIN',
};

function when(iso: string) {
  const d = new Date(iso);
  return `${d.toISOString().slice(0, 10)} ${d.toTimeString().slice(0, 8)}`;
}

/** The wide table's columns: heading and width (0: the rest of the row), in cell order. */
const COLS = [
  ['When', 150],
  ['Who', 130],
  ['What', 130],
  ['Taxpayer', 120],
  ['Where', 0],
] as const;

function Row({ e, wide }: { e: AccessLogEntry; wide: boolean }) {
  const at = (
    <Txt variant="small" figures>
      {when(e.at)}
    </Txt>
  );
  const who = (
    <Txt variant="small" bold>
      {e.username ?? '(not signed in)'}
    </Txt>
  );
  const what = (
    <Txt variant="small" tone={e.action === 'sign-in-refused' ? 'alert' : 'ink'}>
      {ACTION_WORDS[e.action]}
    </Txt>
  );
  const taxpayer = (
    <Txt variant="small" figures>
      {e.taxpayerLabel ?? '—'}
    </Txt>
  );
  const where = (
    <Txt variant="small" tone="soft">
      {[e.route, e.detail].filter(Boolean).join(' · ')}
    </Txt>
  );
  if (!wide) {
    return (
      <Card style={{ gap: 2, padding: space.md }}>
        <View style={{ flexDirection: 'row', justifyContent: 'space-between' }}>
          {who}
          {at}
        </View>
        <View style={{ flexDirection: 'row', gap: space.sm }}>
          {what}
          {taxpayer}
        </View>
        {where}
      </Card>
    );
  }
  return (
    <View
      style={{
        flexDirection: 'row',
        gap: space.md,
        paddingVertical: space.sm,
        paddingHorizontal: space.md,
        borderBottomWidth: 1,
        borderBottomColor: colours.line,
      }}
    >
      {[at, who, what, taxpayer, where].map((c, i) => (
        <View key={i} style={COLS[i][1] ? { width: COLS[i][1] } : { flex: 1 }}>
          {c}
        </View>
      ))}
    </View>
  );
}

/** Administrator's view of who saw or changed what. */
export function AccessLogScreen() {
  const wide = useIsWide();
  const [draft, setDraft] = useState({ user: '', taxpayer: '', from: '', to: '' });
  const [filters, setFilters] = useState(draft);
  const [page, setPage] = useState(1);
  const log = useAccessLog({ ...filters, page, pageSize: 50 });
  const pages = log.data ? Math.max(1, Math.ceil(log.data.total / log.data.pageSize)) : 1;
  return (
    <View style={{ gap: space.lg }}>
      <View>
        <Txt variant="display" bold accessibilityRole="header">
          Access log
        </Txt>
        <Txt tone="soft">Every view and change of taxpayer data, every sign-in. Rows cannot be edited or removed.</Txt>
      </View>
      <Card style={{ flexDirection: wide ? 'row' : 'column', gap: space.md, alignItems: wide ? 'flex-end' : 'stretch' }}>
        {(
          [
            ['user', 'User', 'user name'],
            ['taxpayer', 'Taxpayer', 'TIN or last 3 digits'],
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
              onChangeText={(v) => setDraft({ ...draft, [k]: v })}
            />
          </View>
        ))}
        <Button
          testID="log-filter-apply"
          label="Filter"
          onPress={() => {
            setPage(1);
            setFilters(draft);
          }}
        />
      </Card>
      {log.error && <Txt tone="alert">{log.error.message}</Txt>}
      {log.data && (
        <>
          <Txt variant="small" tone="soft" testID="log-total">
            {log.data.total} entr{log.data.total === 1 ? 'y' : 'ies'}
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
