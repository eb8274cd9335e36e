import { Link, useLocalSearchParams, useRouter } from 'expo-router';
import { useEffect, useState } from 'react';
import { Linking, Platform, Pressable, View } from 'react-native';
import { DeadlineLabel } from './deadline-bits';
import {
  CASE_SORT_LABELS,
  CASE_SORTS,
  NEEDS_KINDS,
  NEEDS_LABELS,
  type CaseListItem,
  type CaseListParams,
  type CaseSort,
  type NeedsKind,
} from '../../../shared/case-api';
import { SavedViewFiltersSchema, type SavedViewFilters } from '../../../shared/saved-views';
import { CASE_STATE_LABELS } from '../../../shared/cases';
import { SCREENING_CAUTION } from '../../../shared/cautions';
import { ACTIVITY_CODES } from '../../../shared/returns/line-codes';
import { useSession } from '../../../hooks/use-session';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { useIsWide } from '../../ui/layout';
import { HeaderLabel, TableHeaderRow } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { age, amount, ScoreMeter, StateBadge, whole } from './case-bits';
import { exportUrl, useCaseList, useExaminers } from './use-cases';
import { NeedsMeStrip } from './needs-me-strip';
import { SavedViewsBar } from './saved-views-bar';
import { useNeedsMe } from './use-my-cases';

const PAGE_SIZE = 25;

const STATE_CHOICES: { value: string; label: string }[] = [
  { value: 'active', label: 'Being worked' },
  { value: 'open', label: CASE_STATE_LABELS.open },
  { value: 'assigned', label: CASE_STATE_LABELS.assigned },
  { value: 'in_review', label: CASE_STATE_LABELS.in_review },
  { value: 'awaiting_reply', label: CASE_STATE_LABELS.awaiting_reply },
  { value: 'finished', label: 'Finished' },
  { value: 'all', label: 'All' },
];

const SORT_CHOICES = CASE_SORTS.map((s) => ({ value: s, label: CASE_SORT_LABELS[s] }));

/** The assessment-deadline filter (issue 13's `deadlineWithin`): any, or within so many days. */
const WITHIN_CHOICES = [
  { value: 'any', label: 'Any' },
  { value: '30', label: 'Within 30 days' },
  { value: '90', label: 'Within 90 days' },
  { value: '365', label: 'Within a year' },
];

type Params = {
  state?: string;
  sort?: string;
  page?: string;
  q?: string;
  taxYear?: string;
  activity?: string;
  assignee?: string;
  batch?: string;
  deadlineWithin?: string;
  needs?: string;
};

/** The filters live in the address, so Back from a case returns to the same page of the queue. */
function useQueueParams() {
  const raw = useLocalSearchParams<Params>();
  const router = useRouter();
  const one = (v: string | string[] | undefined) => (Array.isArray(v) ? v[0] : v) || undefined;
  const p: Params = Object.fromEntries(Object.entries(raw).map(([k, v]) => [k, one(v as string | string[] | undefined)])) as Params;
  const set = (next: Partial<Params>, keepPage = false) => {
    const merged: Params = { ...p, ...next, ...(keepPage ? {} : { page: undefined }) };
    // setParams keeps keys it is not given; empty values clear them.
    router.setParams(
      Object.fromEntries(
        Object.entries({
          state: undefined,
          sort: undefined,
          page: undefined,
          q: undefined,
          taxYear: undefined,
          activity: undefined,
          assignee: undefined,
          batch: undefined,
          deadlineWithin: undefined,
          needs: undefined,
          ...merged,
        }).map(([k, v]) => [k, v ?? '']),
      ),
    );
  };
  return { p, set };
}

function Cell({ w, children, right }: { w?: number; children: React.ReactNode; right?: boolean }) {
  return <View style={[w ? { width: w } : { flex: 1, minWidth: 120 }, right ? { alignItems: 'flex-end' } : null]}>{children}</View>;
}

const COLS = { ref: 136, score: 100, stake: 104, priority: 96, state: 116, who: 124 };

function QueueTableHeader() {
  return (
    <TableHeaderRow>
      <Cell w={COLS.ref}>
        <HeaderLabel>Return</HeaderLabel>
      </Cell>
      <Cell>
        <HeaderLabel>Taxpayer</HeaderLabel>
      </Cell>
      <Cell w={COLS.score}>
        <HeaderLabel>Risk score</HeaderLabel>
      </Cell>
      <Cell w={COLS.stake} right>
        <HeaderLabel>At stake</HeaderLabel>
      </Cell>
      <Cell w={COLS.priority} right>
        <HeaderLabel>Priority</HeaderLabel>
      </Cell>
      <Cell w={COLS.state}>
        <HeaderLabel>State</HeaderLabel>
      </Cell>
      <Cell w={COLS.who}>
        <HeaderLabel>Examiner</HeaderLabel>
      </Cell>
    </TableHeaderRow>
  );
}

function TableRow({ c }: { c: CaseListItem }) {
  return (
    <Link href={{ pathname: '/cases/[id]', params: { id: c.id } }} asChild>
      {/* No accessibilityLabel: the link is named by the text it shows, so what a voice user
          reads on screen is what they can say (WCAG 2.5.3). */}
      <Pressable
        role="link"
        testID={`queue-row-${c.returnRef}`}
        // A plain style object: Link's asChild does not resolve Pressable's style function.
        style={{
          flexDirection: 'row',
          gap: space.md,
          alignItems: 'center',
          paddingVertical: space.sm + 2,
          paddingHorizontal: space.md,
          borderBottomWidth: 1,
          borderBottomColor: colours.line,
        }}
      >
        <Cell w={COLS.ref}>
          <Txt figures bold>
            {c.returnRef}
          </Txt>
          <Txt variant="caption" tone="soft">
            {c.taxYear} · opened {age(c.openedAt) === 'today' ? 'today' : `${age(c.openedAt)} ago`}
            {c.selection === 'random' ? ' · chosen at random' : ''}
          </Txt>
        </Cell>
        <Cell>
          <Txt numberOfLines={1}>{c.taxpayerName}</Txt>
          <Txt variant="caption" figures tone="soft" numberOfLines={1}>
            {c.maskedTin} · {c.activityCode}
          </Txt>
        </Cell>
        <Cell w={COLS.score}>
          <ScoreMeter score={c.riskScore} width={44} />
        </Cell>
        <Cell w={COLS.stake} right>
          <Txt figures>{amount(c.amountAtStake)}</Txt>
        </Cell>
        <Cell w={COLS.priority} right>
          <Txt figures tone="soft">
            {whole(c.priority)}
          </Txt>
        </Cell>
        <Cell w={COLS.state}>
          <View style={{ gap: 4 }}>
            <StateBadge state={c.state} />
            <CaseFlags c={c} />
          </View>
        </Cell>
        <Cell w={COLS.who}>
          <Txt variant="small" tone={c.assigneeName ? 'ink' : 'faint'} numberOfLines={1}>
            {c.assigneeName ?? 'Nobody yet'}
          </Txt>
          {c.dueDate && (
            <Txt variant="caption" figures tone="soft">
              reply due {c.dueDate}
            </Txt>
          )}
          <DeadlineLabel assessBy={c.assessBy} testID={`queue-deadline-${c.returnRef}`} />
        </Cell>
      </Pressable>
    </Link>
  );
}

function CaseCard({ c }: { c: CaseListItem }) {
  return (
    <Link href={{ pathname: '/cases/[id]', params: { id: c.id } }} asChild>
      {/* Named by its visible text (WCAG 2.5.3), as the table row is. */}
      <Pressable role="link" testID={`queue-card-${c.returnRef}`}>
        <Card style={{ gap: space.sm, padding: space.md, borderLeftWidth: 4, borderLeftColor: colours.brass }}>
          <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'center', gap: space.sm }}>
            <Txt figures bold>
              {c.returnRef}
            </Txt>
            <StateBadge state={c.state} />
          </View>
          <CaseFlags c={c} />
          <View>
            <Txt bold numberOfLines={1}>
              {c.taxpayerName}
            </Txt>
            <Txt variant="small" figures tone="soft">
              {c.maskedTin} · {c.activityCode} · {c.taxYear}
              {c.selection === 'random' ? ' · chosen at random' : ''}
            </Txt>
          </View>
          <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'flex-end', gap: space.md }}>
            <View style={{ gap: 2 }}>
              <Txt variant="caption" tone="soft">
                Risk score
              </Txt>
              <ScoreMeter score={c.riskScore} width={72} />
            </View>
            <View style={{ alignItems: 'flex-end', gap: 2 }}>
              <Txt variant="caption" tone="soft">
                At stake
              </Txt>
              <Txt figures bold>
                {amount(c.amountAtStake)}
              </Txt>
            </View>
          </View>
          <Txt variant="caption" tone="soft">
            {c.assigneeName ? `With ${c.assigneeName}` : 'Nobody holds it yet'} · opened {age(c.openedAt) === 'today' ? 'today' : `${age(c.openedAt)} ago`}
            {c.dueDate ? ` · reply due ${c.dueDate}` : ''}
          </Txt>
          <DeadlineLabel assessBy={c.assessBy} testID={`queue-card-deadline-${c.returnRef}`} />
        </Card>
      </Pressable>
    </Link>
  );
}

/** A taxpayer's reply the examiner has not opened, and a finished case found by a search. */
function CaseFlags({ c }: { c: CaseListItem }) {
  if (!c.replyUnread && !c.finished) return null;
  return (
    <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }}>
      {c.replyUnread && (
        <View style={{ backgroundColor: colours.alertSoft, borderRadius: radius.sm, paddingHorizontal: space.sm, paddingVertical: 1 }}>
          <Txt variant="caption" bold tone="alert" testID={`reply-flag-${c.returnRef}`}>
            ● New reply
          </Txt>
        </View>
      )}
      {c.finished && (
        <View style={{ backgroundColor: colours.neutralSoft, borderRadius: radius.sm, paddingHorizontal: space.sm, paddingVertical: 1 }}>
          <Txt variant="caption" bold testID={`finished-${c.returnRef}`}>
            Finished
          </Txt>
        </View>
      )}
    </View>
  );
}

/** Keeps only the filters that are set (a view keeps no empty keys). */
function compact(f: SavedViewFilters): SavedViewFilters {
  return Object.fromEntries(Object.entries(f).filter(([, v]) => v !== undefined && v !== '')) as SavedViewFilters;
}

/**
 * Examiner's and supervisor's ranked queue: saved views, the examiner's "Needs me", filters,
 * sort, search, paging, export. An examiner starts on their own cases ("My cases"); a search
 * reaches every case in every state unless a filter was chosen, and marks finished cases.
 */
export function QueueScreen() {
  const wide = useIsWide();
  const session = useSession();
  const role = session.data?.user.role;
  const isExaminer = role === 'examiner';
  const examiners = useExaminers();
  const { p, set: setParams } = useQueueParams();
  const [search, setSearch] = useState(p.q ?? '');
  const [more, setMore] = useState(!!(p.taxYear || p.activity || p.batch || p.deadlineWithin));
  // On a phone the filters fold away so the first cases show without scrolling.
  const [showFilters, setShowFilters] = useState(false);
  const [year, setYear] = useState(p.taxYear ?? '');
  useEffect(() => setSearch(p.q ?? ''), [p.q]);

  const searching = !!p.q;
  // The address with no filters at all is an examiner's start: their own cases ("My cases").
  // An address with filters but no holder (a link from a batch, a search) means anyone's, and
  // a search reaches every state unless one was chosen.
  const bare = Object.values(p).every((v) => v === undefined);
  const assignee = p.assignee ?? (isExaminer && bare ? 'me' : 'any');
  const state = p.state ?? (searching ? 'all' : 'active');
  const needs = (NEEDS_KINDS as readonly string[]).includes(p.needs ?? '') ? (p.needs as NeedsKind) : undefined;
  const within = p.deadlineWithin && /^\d{1,4}$/.test(p.deadlineWithin) ? Number(p.deadlineWithin) : undefined;
  const mine = assignee === 'me' && !searching;
  // Changing a filter on "My cases" stays on my cases: the implicit holder is written into the address.
  const set: typeof setParams = (next, keepPage) => setParams({ assignee: p.assignee ?? (bare && assignee === 'me' ? 'me' : undefined), ...next }, keepPage);
  const needsCounts = useNeedsMe(isExaminer);

  const page = Math.max(1, Number(p.page) || 1);
  const query: Partial<CaseListParams> = {
    state,
    sort: (CASE_SORTS as readonly string[]).includes(p.sort ?? '') ? (p.sort as CaseSort) : 'priority',
    q: p.q,
    taxYear: p.taxYear,
    activity: p.activity as CaseListParams['activity'],
    assignee: assignee === 'any' ? undefined : assignee,
    batch: p.batch,
    deadlineWithin: within,
    needs,
    page,
    pageSize: PAGE_SIZE,
  };
  const list = useCaseList(query);
  const total = list.data?.total ?? 0;
  const pages = Math.max(1, Math.ceil(total / PAGE_SIZE));

  // What a saved view keeps: the filters and order in effect now.
  const current = compact({
    state: state as SavedViewFilters['state'],
    sort: query.sort as CaseSort,
    assignee: assignee as SavedViewFilters['assignee'],
    taxYear: p.taxYear ? Number(p.taxYear) : undefined,
    activity: query.activity,
    deadlineWithin: within,
    needs,
    q: p.q,
  });
  const applyView = (f: SavedViewFilters) => {
    const v = SavedViewFiltersSchema.parse(f);
    set({
      state: v.state,
      sort: v.sort,
      assignee: v.assignee,
      taxYear: v.taxYear === undefined ? undefined : String(v.taxYear),
      activity: v.activity,
      deadlineWithin: v.deadlineWithin === undefined ? undefined : String(v.deadlineWithin),
      needs: v.needs,
      q: v.q,
      batch: undefined,
    });
  };

  const whoChoices = [
    ...(isExaminer ? [{ value: 'me', label: 'Mine' }] : []),
    { value: 'any', label: 'Anyone' },
    { value: 'none', label: 'Nobody yet' },
    ...(role === 'supervisor' ? (examiners.data?.items ?? []).map((e) => ({ value: e.id, label: e.displayName })) : []),
  ];
  const download = () => {
    const url = exportUrl(query);
    // The session cookie goes with a same-origin navigation; the answer is an attachment, so the page stays.
    if (Platform.OS === 'web' && typeof window !== 'undefined') window.location.assign(url);
    else void Linking.openURL(url);
  };
  const summary = [
    STATE_CHOICES.find((c) => c.value === state)?.label ?? state,
    CASE_SORT_LABELS[query.sort as CaseSort],
    whoChoices.find((c) => c.value === assignee)?.label ?? 'One examiner',
    within !== undefined ? `deadline within ${within} days` : null,
    needs ? NEEDS_LABELS[needs].toLowerCase() : null,
  ]
    .filter(Boolean)
    .join(' · ');

  return (
    <View style={{ gap: space.lg }}>
      <View style={{ flexDirection: wide ? 'row' : 'column', justifyContent: 'space-between', alignItems: wide ? 'flex-end' : 'stretch', gap: space.sm }}>
        <View style={{ gap: space.xs, flexShrink: 1 }}>
          <Txt variant="display" bold accessibilityRole="header">
            {mine ? 'My cases' : 'Examination queue'}
          </Txt>
          <Txt tone="soft">{mine ? 'Cases you hold, highest priority first.' : 'Returns selected by scoring for a human look, highest first.'}</Txt>
          <Txt variant="small" tone="soft" testID="screening-caution">
            {SCREENING_CAUTION}
          </Txt>
        </View>
        {role === 'supervisor' && (
          <Button kind="secondary" label="Export to XLSX" testID="queue-export" onPress={download} style={{ alignSelf: wide ? 'auto' : 'flex-start' }} />
        )}
      </View>

      <SavedViewsBar current={current} onApply={applyView} />

      {isExaminer && !searching && (
        <NeedsMeStrip counts={needsCounts.data} active={needs} wide={wide} onChoose={(k) => set({ needs: k, assignee: k ? 'me' : p.assignee })} />
      )}

      <Card style={{ gap: space.md }}>
        <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end' }}>
          <View style={{ flex: 1 }}>
            <Field
              testID="queue-search"
              label="Find a case"
              placeholder="Reference, 9-digit TIN or taxpayer name"
              autoCapitalize="none"
              value={search}
              onChangeText={setSearch}
              onSubmitEditing={() => setParams({ q: search.trim() || undefined, assignee: p.assignee })}
              returnKeyType="search"
            />
          </View>
          <Button label="Find" testID="queue-search-go" onPress={() => setParams({ q: search.trim() || undefined, assignee: p.assignee })} />
        </View>
        {p.q && (
          <Pressable accessibilityRole="button" onPress={() => set({ q: undefined })} testID="queue-search-clear">
            <Txt variant="small" tone="brass" bold>
              Showing matches for “{p.q}”{p.state ? '' : ' in every state, finished ones marked'} · clear ✕
            </Txt>
          </Pressable>
        )}
        {!wide && (
          <Pressable
            accessibilityRole="button"
            onPress={() => setShowFilters(!showFilters)}
            testID="queue-filters-toggle"
            style={{ flexDirection: 'row', justifyContent: 'space-between', gap: space.sm }}
          >
            <Txt variant="small" tone="soft" style={{ flex: 1 }} numberOfLines={2}>
              {summary}
            </Txt>
            <Txt variant="small" bold tone="brass">
              {showFilters ? 'Hide filters ▴' : 'Filters ▾'}
            </Txt>
          </Pressable>
        )}
        {(wide || showFilters) && (
          <>
            <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.md, flexWrap: 'wrap' }}>
              <ChoiceRow testID="queue-state" label="State" options={STATE_CHOICES} value={state} onChange={(v) => set({ state: v })} />
              <ChoiceRow
                testID="queue-sort"
                label="Order"
                options={SORT_CHOICES}
                value={query.sort as CaseSort}
                onChange={(v) => set({ sort: v === 'priority' ? undefined : v })}
              />
            </View>
            <ChoiceRow
              testID="queue-who"
              label="Held by"
              options={whoChoices}
              value={assignee}
              onChange={(v) => set({ assignee: !isExaminer && v === 'any' ? undefined : v, needs: v === 'me' ? p.needs : undefined })}
            />
            <ChoiceRow
              testID="queue-within"
              label="Assessment deadline"
              options={WITHIN_CHOICES}
              value={within === undefined ? 'any' : String(within)}
              onChange={(v) => set({ deadlineWithin: v === 'any' ? undefined : v })}
            />
            <Pressable accessibilityRole="button" onPress={() => setMore(!more)} testID="queue-more">
              <Txt variant="small" bold tone="brass">
                {more ? 'Fewer filters ▴' : 'More filters: tax year, activity, batch ▾'}
              </Txt>
            </Pressable>
          </>
        )}
        {more && (wide || showFilters) && (
          <View style={{ gap: space.md }}>
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end' }}>
              <View style={{ width: 140 }}>
                <Field
                  testID="queue-year"
                  label="Tax year"
                  placeholder="e.g. 2024"
                  keyboardType="number-pad"
                  value={year}
                  onChangeText={setYear}
                  onSubmitEditing={() => set({ taxYear: year.trim() || undefined })}
                />
              </View>
              <Button kind="secondary" label="Apply" onPress={() => set({ taxYear: year.trim() || undefined })} />
            </View>
            <ChoiceRow
              testID="queue-activity"
              label="Activity"
              options={[{ value: 'any', label: 'Any' }, ...ACTIVITY_CODES.map((a) => ({ value: a, label: a }))]}
              value={p.activity ?? 'any'}
              onChange={(v) => set({ activity: v === 'any' ? undefined : v })}
            />
            {p.batch && (
              <Pressable accessibilityRole="button" onPress={() => set({ batch: undefined })}>
                <Txt variant="small" tone="brass" bold>
                  Only batch {p.batch.slice(0, 8)}… · clear ✕
                </Txt>
              </Pressable>
            )}
          </View>
        )}
      </Card>

      {list.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {list.error.message}
        </Txt>
      )}
      {list.isPending && <Txt tone="soft">Loading the queue…</Txt>}
      {list.data && (
        <>
          <Txt variant="small" tone="soft" testID="queue-total">
            {total === 0
              ? mine && !needs && state === 'active'
                ? 'You hold no cases being worked. Choose “Anyone” under Held by to find one to claim.'
                : 'No cases match these filters.'
              : `${whole((page - 1) * PAGE_SIZE + 1)}–${whole(Math.min(total, page * PAGE_SIZE))} of ${whole(total)} case${total === 1 ? '' : 's'}`}
            {query.state === 'active' ? ' being worked' : ''}
            {` · by ${CASE_SORT_LABELS[query.sort as CaseSort].toLowerCase()}`}
          </Txt>
          {wide ? (
            <View
              style={{
                backgroundColor: colours.surface,
                borderWidth: 1,
                borderColor: colours.line,
                borderRadius: radius.md,
                opacity: list.isPlaceholderData ? 0.6 : 1,
              }}
              testID="queue-table"
            >
              <QueueTableHeader />
              {list.data.items.map((c) => (
                <TableRow key={c.id} c={c} />
              ))}
            </View>
          ) : (
            <View style={{ gap: space.sm, opacity: list.isPlaceholderData ? 0.6 : 1 }} testID="queue-cards">
              {list.data.items.map((c) => (
                <CaseCard key={c.id} c={c} />
              ))}
            </View>
          )}
          {total > PAGE_SIZE && (
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center', justifyContent: wide ? 'flex-start' : 'space-between' }}>
              <Button kind="secondary" label="← Previous" testID="queue-prev" disabled={page <= 1} onPress={() => set({ page: String(page - 1) }, true)} />
              <Txt variant="small" figures testID="queue-page">
                page {page} of {whole(pages)}
              </Txt>
              <Button kind="secondary" label="Next →" testID="queue-next" disabled={page >= pages} onPress={() => set({ page: String(page + 1) }, true)} />
            </View>
          )}
        </>
      )}
    </View>
  );
}
