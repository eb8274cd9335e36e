import { Link } from 'expo-router';
import { useEffect, useState } from 'react';
import { Pressable, View } from 'react-native';
import type { BulkReassignResult, CaseListItem, WorkloadRow } from '../../../shared/case-api';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { useIsWide } from '../../ui/layout';
import { HeaderLabel, TableHeaderRow } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { amount, ScoreMeter, whole } from '../cases/case-bits';
import { useBulkReassign, useCaseList } from '../cases/use-cases';
import { useWorkload } from './use-workload';

/** Whose cases the reassignment panel lists: an examiner's id, or 'none' for open cases nobody holds. */
type Source = string;

const COUNTS: {
  key: keyof Pick<WorkloadRow, 'assigned' | 'inReview' | 'awaitingReply' | 'overdue' | 'deadlinesNear' | 'open' | 'finished30d'>;
  label: string;
  short: string;
}[] = [
  { key: 'assigned', label: 'Not started', short: 'Not started' },
  { key: 'inReview', label: 'In review', short: 'In review' },
  { key: 'awaitingReply', label: 'Awaiting reply', short: 'Awaiting reply' },
  { key: 'overdue', label: 'Overdue', short: 'Overdue' },
  { key: 'deadlinesNear', label: 'Deadline < 90 days', short: 'Deadline < 90 d' },
  { key: 'open', label: 'Open in all', short: 'Open' },
  { key: 'finished30d', label: 'Finished, last 30 days', short: 'Finished (30 d)' },
];

function Count({ n, alert, bold }: { n: number; alert?: boolean; bold?: boolean }) {
  return (
    <Txt figures bold={bold || (alert && n > 0)} tone={alert && n > 0 ? 'alert' : n === 0 ? 'faint' : 'ink'}>
      {whole(n)}
    </Txt>
  );
}

function Checkbox({ checked, onPress, label, testID }: { checked: boolean; onPress(): void; label: string; testID?: string }) {
  return (
    <Pressable role="checkbox" aria-checked={checked} aria-label={label} onPress={onPress} testID={testID} hitSlop={8}>
      <View
        style={{
          width: 22,
          height: 22,
          borderRadius: radius.sm,
          borderWidth: 2,
          borderColor: checked ? colours.ink : colours.control,
          backgroundColor: checked ? colours.ink : colours.white,
          alignItems: 'center',
          justifyContent: 'center',
        }}
      >
        {checked && (
          <Txt variant="small" bold tone="white" style={{ lineHeight: 16 }}>
            ✓
          </Txt>
        )}
      </View>
    </Pressable>
  );
}

function ExaminerTable({ rows, onPick, picked }: { rows: WorkloadRow[]; onPick(id: string): void; picked: Source | null }) {
  return (
    <View style={{ backgroundColor: colours.surface, borderWidth: 1, borderColor: colours.line, borderRadius: radius.md }} testID="workload-table">
      <TableHeaderRow>
        <View style={{ flex: 1 }}>
          <HeaderLabel>Examiner</HeaderLabel>
        </View>
        {COUNTS.map((c) => (
          <View key={c.key} style={{ width: 96, alignItems: 'flex-end' }}>
            <HeaderLabel right>{c.label}</HeaderLabel>
          </View>
        ))}
        <View style={{ width: 120 }} />
      </TableHeaderRow>
      {rows.map((r) => (
        <View
          key={r.examinerId}
          style={{
            flexDirection: 'row',
            gap: space.md,
            alignItems: 'center',
            paddingVertical: space.sm,
            paddingHorizontal: space.md,
            borderBottomWidth: 1,
            borderBottomColor: colours.line,
            backgroundColor: picked === r.examinerId ? colours.brassSoft : 'transparent',
          }}
          testID={`workload-${r.username}`}
        >
          <View style={{ flex: 1 }}>
            <Txt bold>{r.displayName}</Txt>
            <Txt variant="caption" figures tone="soft">
              {r.username}
            </Txt>
          </View>
          {COUNTS.map((c) => (
            <View key={c.key} style={{ width: 96, alignItems: 'flex-end' }} testID={`workload-${r.username}-${c.key}`}>
              <Count n={r[c.key]} alert={c.key === 'overdue'} bold={c.key === 'open'} />
            </View>
          ))}
          <View style={{ width: 120, alignItems: 'flex-end' }}>
            <Button
              kind="quiet"
              label="Reassign…"
              testID={`workload-${r.username}-reassign`}
              disabled={r.assigned === 0}
              onPress={() => onPick(r.examinerId)}
            />
          </View>
        </View>
      ))}
    </View>
  );
}

function ExaminerCard({ r, onPick, picked }: { r: WorkloadRow; onPick(id: string): void; picked: boolean }) {
  return (
    <Card style={{ gap: space.sm, padding: space.md, borderColor: picked ? colours.brass : colours.line }} testID={`workload-${r.username}`}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'baseline' }}>
        <Txt bold>{r.displayName}</Txt>
        <Txt variant="small" tone="soft">
          <Txt figures bold>
            {whole(r.open)}
          </Txt>{' '}
          open
        </Txt>
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', rowGap: space.sm }}>
        {COUNTS.filter((c) => c.key !== 'open').map((c) => (
          <View
            key={c.key}
            style={{ width: '50%', flexDirection: 'row', justifyContent: 'space-between', paddingRight: space.md }}
            testID={`workload-${r.username}-${c.key}`}
          >
            <Txt variant="small" tone="soft">
              {c.short}
            </Txt>
            <Count n={r[c.key]} alert={c.key === 'overdue'} />
          </View>
        ))}
      </View>
      <Button
        kind="secondary"
        label="Reassign cases…"
        testID={`workload-${r.username}-reassign`}
        disabled={r.assigned === 0}
        onPress={() => onPick(r.examinerId)}
        style={{ alignSelf: 'flex-start' }}
      />
    </Card>
  );
}

function CaseChoice({ c, checked, onToggle }: { c: CaseListItem; checked: boolean; onToggle(): void }) {
  return (
    <View
      style={{ flexDirection: 'row', alignItems: 'center', gap: space.md, paddingVertical: space.sm, borderBottomWidth: 1, borderBottomColor: colours.line }}
    >
      <Checkbox checked={checked} onPress={onToggle} label={`Select ${c.returnRef}`} testID={`pick-${c.returnRef}`} />
      <View style={{ flex: 1, gap: 2 }}>
        <Txt figures bold>
          {c.returnRef}
        </Txt>
        <Txt variant="small" tone="soft" numberOfLines={1}>
          {c.taxpayerName} · {c.taxYear}
        </Txt>
      </View>
      <View style={{ alignItems: 'flex-end', gap: 2 }}>
        <ScoreMeter score={c.riskScore} width={40} />
        <Txt variant="caption" figures tone="soft">
          {amount(c.amountAtStake)}
        </Txt>
      </View>
    </View>
  );
}

function ReassignPanel({ source, rows, onClose }: { source: Source; rows: WorkloadRow[]; onClose(): void }) {
  const fromName = source === 'none' ? null : (rows.find((r) => r.examinerId === source)?.displayName ?? 'this examiner');
  // Only cases not yet started can move (the workflow keeps a case in review with its examiner).
  const cases = useCaseList(source === 'none' ? { state: 'open', assignee: 'none', pageSize: 100 } : { state: 'assigned', assignee: source, pageSize: 100 });
  const move = useBulkReassign();
  const [picked, setPicked] = useState<Set<string>>(new Set());
  const [target, setTarget] = useState<string | undefined>(undefined);
  const [result, setResult] = useState<BulkReassignResult | null>(null);
  useEffect(() => {
    setPicked(new Set());
    setResult(null);
  }, [source]);
  const items = cases.data?.items ?? [];
  const targets = rows.filter((r) => r.examinerId !== source);
  const targetName = targets.find((t) => t.examinerId === target)?.displayName;
  const refOf = new Map(items.map((c) => [c.id, c.returnRef]));
  const toggle = (id: string) => {
    const next = new Set(picked);
    if (next.has(id)) next.delete(id);
    else next.add(id);
    setPicked(next);
  };
  return (
    <Card style={{ gap: space.md, borderColor: colours.brass, borderWidth: 1.5 }} testID="reassign-panel">
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'baseline', gap: space.sm }}>
        <Txt variant="title" bold accessibilityRole="header">
          {fromName ? `Move cases from ${fromName}` : 'Give open cases to an examiner'}
        </Txt>
        <Button kind="quiet" label="Close" onPress={onClose} testID="reassign-close" />
      </View>
      <Txt variant="small" tone="soft">
        {fromName
          ? 'Cases not yet started can move; a case in review stays with its examiner. Each move is kept in the case\u2019s history.'
          : 'The highest-priority open cases nobody holds yet. Each assignment is kept in the case\u2019s history.'}
      </Txt>
      {cases.isPending && <Txt tone="soft">Loading cases…</Txt>}
      {cases.data && items.length === 0 && <Txt tone="soft">No cases to move.</Txt>}
      {items.length > 0 && (
        <View>
          <View
            style={{
              flexDirection: 'row',
              alignItems: 'center',
              gap: space.md,
              paddingBottom: space.sm,
              borderBottomWidth: 1.5,
              borderBottomColor: colours.ink,
            }}
          >
            <Checkbox
              checked={picked.size === items.length}
              onPress={() => setPicked(picked.size === items.length ? new Set() : new Set(items.map((c) => c.id)))}
              label="Select all"
              testID="pick-all"
            />
            <Txt variant="small" bold>
              {picked.size
                ? `${picked.size} of ${items.length} chosen`
                : `Choose cases (${items.length}${cases.data && cases.data.total > items.length ? ` of ${whole(cases.data.total)}` : ''})`}
            </Txt>
          </View>
          {items.map((c) => (
            <CaseChoice key={c.id} c={c} checked={picked.has(c.id)} onToggle={() => toggle(c.id)} />
          ))}
        </View>
      )}
      <ChoiceRow
        testID="reassign-to"
        label="To"
        options={targets.map((t) => ({ value: t.examinerId, label: `${t.displayName} (${t.open} open)` }))}
        value={target}
        onChange={setTarget}
      />
      {move.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {move.error.message}
        </Txt>
      )}
      {result && (
        <View style={{ gap: 2 }} testID="reassign-result" accessibilityRole="alert">
          <Txt tone="ok" bold>
            {result.moved.length} case{result.moved.length === 1 ? '' : 's'} moved.
          </Txt>
          {result.refused.map((r) => (
            <Txt key={r.id} variant="small" tone="alert">
              {refOf.get(r.id) ?? r.id}: {r.reason}
            </Txt>
          ))}
        </View>
      )}
      <Button
        label={picked.size && targetName ? `Move ${picked.size} case${picked.size === 1 ? '' : 's'} to ${targetName}` : 'Choose cases and an examiner'}
        disabled={!picked.size || !target}
        busy={move.isPending}
        testID="reassign-submit"
        onPress={() =>
          target &&
          move.mutate(
            { caseIds: [...picked], assigneeId: target },
            {
              onSuccess: (r) => {
                setResult(r);
                setPicked(new Set());
              },
            },
          )
        }
        style={{ alignSelf: 'flex-start' }}
      />
    </Card>
  );
}

/** Supervisor's screen: each examiner's load, and moving cases between them. */
export function WorkloadScreen() {
  const wide = useIsWide();
  const w = useWorkload();
  const [source, setSource] = useState<Source | null>(null);
  const rows = w.data?.examiners ?? [];
  const panel = source ? <ReassignPanel source={source} rows={rows} onClose={() => setSource(null)} /> : null;
  return (
    <View style={{ gap: space.lg }}>
      <View style={{ gap: space.xs }}>
        <Txt variant="display" bold accessibilityRole="header">
          Workload
        </Txt>
        <Txt tone="soft">Who holds which cases, what waits on a reply, and what is past its due date.</Txt>
      </View>
      {w.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {w.error.message}
        </Txt>
      )}
      {w.isPending && <Txt tone="soft">Counting…</Txt>}
      {w.data && (
        <>
          <Card
            style={{
              flexDirection: wide ? 'row' : 'column',
              gap: space.md,
              alignItems: wide ? 'center' : 'flex-start',
              borderLeftWidth: 4,
              borderLeftColor: colours.brass,
            }}
            testID="workload-unassigned"
          >
            <View style={{ flex: wide ? 1 : undefined, gap: 2 }}>
              <Txt>
                <Txt figures bold variant="title">
                  {whole(w.data.unassigned)}
                </Txt>{' '}
                open case{w.data.unassigned === 1 ? '' : 's'} nobody holds yet
              </Txt>
              <Txt variant="caption" tone="soft">
                Counts as of {w.data.asOf}; overdue means a due date before today.
              </Txt>
            </View>
            <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
              <Link href={{ pathname: '/queue', params: { state: 'open', assignee: 'none' } }} asChild>
                <Pressable accessibilityRole="link" style={{ paddingVertical: space.sm }}>
                  <Txt bold tone="brass">
                    See them in the queue →
                  </Txt>
                </Pressable>
              </Link>
              <Button
                kind="secondary"
                label="Give some out…"
                testID="workload-assign-open"
                disabled={w.data.unassigned === 0}
                onPress={() => setSource('none')}
              />
            </View>
          </Card>
          {!wide && source === 'none' && panel}
          {rows.length === 0 && <Txt tone="soft">No active examiners.</Txt>}
          {wide ? (
            <ExaminerTable rows={rows} onPick={setSource} picked={source} />
          ) : (
            <View style={{ gap: space.sm }}>
              {rows.map((r) => (
                <View key={r.examinerId} style={{ gap: space.sm }}>
                  <ExaminerCard r={r} onPick={setSource} picked={source === r.examinerId} />
                  {/* On a phone the panel opens under the examiner it moves cases from. */}
                  {source === r.examinerId && panel}
                </View>
              ))}
            </View>
          )}
          {wide && panel}
        </>
      )}
    </View>
  );
}
