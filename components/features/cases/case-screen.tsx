import { zodResolver } from '@hookform/resolvers/zod';
import { Link, useLocalSearchParams } from 'expo-router';
import { useState, type ReactNode } from 'react';
import { useForm } from 'react-hook-form';
import { Pressable, View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import {
  CASE_SELECTION_LABELS,
  CASE_STATE_LABELS,
  isFinalState,
  NoteRequestSchema,
  TransitionRequestSchema,
  type NoteRequest,
  type TransitionRequest,
} from '../../../shared/cases';
import { SCREENING_CAUTION } from '../../../shared/cautions';
import { LINE_CODE_DEFS } from '../../../shared/returns/line-codes';
import type { PoolSnapshot } from '../../../shared/scoring/breakdown';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { LettersPanel } from '../letters/letters-panel';
import { age, amount, StateBadge, when, whole } from './case-bits';
import { DeadlineLabel } from './deadline-bits';
import { DigitChart } from './digit-chart';
import { useAddNote, useAssign, useCase, useClaim, useExaminers, useRevealTin, useTransition } from './use-cases';

const OWN_VERDICT: Record<CaseDetail['score']['breakdown']['digits']['verdict'], string> = {
  within_expected: 'within the spread typical figures of this size show',
  elevated: 'more uneven than typical figures of this size usually are',
  high: 'far more uneven than typical figures of this size usually are',
  too_few: 'too few amounts for a verdict',
};

const CONFORMITY: Record<PoolSnapshot['conformity'], string> = {
  close: 'close conformity',
  acceptable: 'acceptable conformity',
  marginal: 'marginal conformity',
  nonconformity: 'nonconformity',
  too_few: 'too few amounts for a verdict',
};

function poolWords(p: PoolSnapshot): string {
  if (p.judgedBy === 'fixed') return `${CONFORMITY[p.conformity]} (MAD ${p.mad?.toFixed(4) ?? '—'}, Nigrini's thresholds)`;
  if (p.judgedBy === 'size-aware') return OWN_VERDICT[p.verdict];
  return 'too few amounts for a verdict';
}

function Section({ title, children, testID, right }: { title: string; children: ReactNode; testID?: string; right?: ReactNode }) {
  return (
    <Card style={{ gap: space.md }} testID={testID}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'baseline', gap: space.sm }}>
        <Txt variant="title" bold role="heading" aria-level={2}>
          {title}
        </Txt>
        {right}
      </View>
      {children}
    </Card>
  );
}

function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <View style={{ minWidth: 120, gap: 2 }}>
      <Txt variant="caption" tone="soft">
        {label}
      </Txt>
      {typeof children === 'string' ? <Txt>{children}</Txt> : children}
    </View>
  );
}

function Header({ d }: { d: CaseDetail }) {
  const reveal = useRevealTin(d.id);
  const r = d.return;
  return (
    <View style={{ gap: space.md }}>
      <Link href="/queue" asChild>
        <Pressable accessibilityRole="link" testID="back-to-queue">
          <Txt variant="small" bold tone="brass">
            ← Queue
          </Txt>
        </Pressable>
      </Link>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.md }}>
        <Txt variant="display" bold figures accessibilityRole="header" testID="case-ref">
          {r.returnRef}
        </Txt>
        <StateBadge state={d.state} testID="case-state" />
      </View>
      <View style={{ gap: 2 }}>
        <Txt variant="lead" bold testID="case-taxpayer">
          {d.taxpayer.name}
        </Txt>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }}>
          <Txt figures tone="soft" testID="case-tin">
            TIN {reveal.data ? reveal.data.tin.replace(/^(\d{3})(\d{3})(\d{3})$/, '$1 $2 $3') : d.taxpayer.maskedTin}
          </Txt>
          {d.actions.revealTin && !reveal.data && (
            <Pressable accessibilityRole="button" onPress={() => reveal.mutate()} testID="reveal-tin">
              <Txt variant="small" bold tone="brass">
                Show full TIN (logged)
              </Txt>
            </Pressable>
          )}
          {reveal.error && (
            <Txt variant="small" tone="alert">
              {reveal.error.message}
            </Txt>
          )}
        </View>
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
        <Fact label="Tax year">{String(r.taxYear)}</Fact>
        <Fact label="Activity">{d.taxpayer.activityCode}</Fact>
        <Fact label="Preparer">{r.preparerCode ?? 'Self-prepared'}</Fact>
        <Fact label="Why it is here">{CASE_SELECTION_LABELS[d.selection]}</Fact>
        <Fact label="Examiner">{d.assignee?.name ?? 'Nobody yet'}</Fact>
        <Fact label="Opened">{`${when(d.openedAt).slice(0, 10)} (${age(d.openedAt)})`}</Fact>
        {d.dueDate && <Fact label="Reply due">{d.dueDate}</Fact>}
      </View>
      <View style={{ gap: 2 }} testID="case-deadline">
        <DeadlineLabel assessBy={d.deadline.assessBy} daysLeft={d.deadline.daysLeft} testID="case-deadline-label" />
        <Txt variant="caption" tone="soft">
          {d.deadline.explanation} {d.deadline.caution}
        </Txt>
      </View>
    </View>
  );
}

function ScoreSummary({ d }: { d: CaseDetail }) {
  const b = d.score.breakdown;
  return (
    <Card style={{ gap: space.md, backgroundColor: colours.ink, borderColor: colours.ink }} testID="case-score">
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xl, alignItems: 'flex-end' }}>
        <View>
          <Txt variant="caption" style={{ color: colours.onInkSoft }}>
            Risk score
          </Txt>
          <Txt figures bold tone="white" style={{ fontSize: 40, lineHeight: 46 }} testID="case-risk-score">
            {d.riskScore.toFixed(1)}
            <Txt figures tone="white" variant="lead">
              {' '}
              / 100
            </Txt>
          </Txt>
        </View>
        <View>
          <Txt variant="caption" style={{ color: colours.onInkSoft }}>
            Amount at stake
          </Txt>
          <Txt figures bold tone="white" variant="title">
            {amount(d.amountAtStake)}
          </Txt>
        </View>
        <View>
          <Txt variant="caption" style={{ color: colours.onInkSoft }}>
            Priority
          </Txt>
          <Txt figures tone="white" variant="lead">
            {whole(d.priority)}
          </Txt>
        </View>
      </View>
      <Txt variant="small" style={{ color: '#D5DFDD' }}>
        {b.stakeBasis.replace(/\.\s*$/, '')}. Scored under profile version {d.score.profileVersion} on {when(d.score.scoredAt).slice(0, 10)}; a case opens at{' '}
        {b.selectionCut} points.
      </Txt>
    </Card>
  );
}

function Caution() {
  return (
    <View
      style={{ backgroundColor: colours.brassSoft, borderLeftWidth: 4, borderLeftColor: colours.brass, borderRadius: radius.sm, padding: space.md, gap: 2 }}
      testID="screening-caution"
      accessibilityRole="summary"
    >
      <Txt variant="small" bold>
        Screening, not a finding
      </Txt>
      <Txt variant="small">{SCREENING_CAUTION}</Txt>
    </View>
  );
}

function Factors({ d }: { d: CaseDetail }) {
  const [showQuiet, setShowQuiet] = useState(false);
  const sorted = [...d.score.breakdown.components].sort((a, b) => b.points - a.points || a.label.localeCompare(b.label));
  const raised = sorted.filter((c) => c.points > 0);
  const quiet = sorted.filter((c) => c.points <= 0);
  return (
    <Section title="Why it was selected" testID="case-factors">
      {raised.length === 0 && <Txt tone="soft">No factor added points.</Txt>}
      {raised.map((c) => (
        <View
          key={c.key}
          style={{ flexDirection: 'row', gap: space.md, paddingTop: space.sm, borderTopWidth: 1, borderTopColor: colours.line }}
          testID={`factor-${c.key}`}
        >
          <View style={{ width: 86, gap: 4 }}>
            <Txt figures bold tone="brass">
              +{c.points.toFixed(1)}
            </Txt>
            <Txt variant="caption" tone="soft">
              points of {c.weight}
            </Txt>
            <View style={{ height: 4, borderRadius: 2, backgroundColor: colours.line, overflow: 'hidden' }}>
              <View style={{ width: `${Math.round(c.strength * 100)}%`, height: 4, backgroundColor: colours.brass }} />
            </View>
          </View>
          <View style={{ flex: 1, gap: 2 }}>
            <Txt bold>{c.label}</Txt>
            <Txt variant="small">{c.evidence}</Txt>
          </View>
        </View>
      ))}
      {quiet.length > 0 && (
        <Pressable accessibilityRole="button" onPress={() => setShowQuiet(!showQuiet)} testID="factors-quiet-toggle">
          <Txt variant="small" bold tone="brass">
            {showQuiet ? 'Hide' : 'Show'} the {quiet.length} factor{quiet.length === 1 ? '' : 's'} that added nothing {showQuiet ? '▴' : '▾'}
          </Txt>
        </Pressable>
      )}
      {showQuiet &&
        quiet.map((c) => (
          <View key={c.key} style={{ gap: 2, paddingLeft: space.sm, borderLeftWidth: 2, borderLeftColor: colours.line }}>
            <Txt variant="small" bold tone="soft">
              {c.label} · 0 points
            </Txt>
            <Txt variant="small" tone="soft">
              {c.evidence}
            </Txt>
          </View>
        ))}
    </Section>
  );
}

function Digits({ d }: { d: CaseDetail }) {
  const wide = useIsWide();
  const b = d.score.breakdown;
  const pool = b.preparerPool;
  return (
    <Section title="Leading digits against the expected curve" testID="case-digits">
      <Txt variant="small" tone="soft">
        In many ordinary sets of amounts, 1 leads about 30 % of the time and 9 under 5 % (Benford&apos;s law). Departures point at figures worth a look; they do
        not show that anything is wrong.
      </Txt>
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.xl }}>
        <View style={{ flex: wide ? 1 : undefined }}>
          <DigitChart
            testID="digit-chart-return"
            counts={b.digits.firstDigitCounts}
            title="This return's amounts"
            caption={`${b.digits.n} amounts · ${OWN_VERDICT[b.digits.verdict]}${b.digits.zScore !== null ? ` (size-aware z ${b.digits.zScore.toFixed(1)})` : ''}`}
          />
        </View>
        <View style={{ flex: wide ? 1 : undefined }}>
          {pool?.firstDigitCounts ? (
            <DigitChart
              testID="digit-chart-preparer"
              counts={pool.firstDigitCounts}
              title={`Preparer ${d.return.preparerCode ?? ''}: all clients' amounts`}
              caption={`${whole(pool.n)} amounts · ${poolWords(pool)}`}
            />
          ) : (
            <View style={{ gap: space.xs }}>
              <Txt bold>Preparer&apos;s pooled amounts</Txt>
              <Txt tone="soft">{d.return.preparerCode ? 'The preparer has too few amounts on file to pool.' : 'Self-prepared return: no preparer pool.'}</Txt>
            </View>
          )}
        </View>
      </View>
    </Section>
  );
}

/** Width of an amount column in the totals: fits "−9,999,999.99" in the small figures face. */
const AMOUNT_COL = 116;

function TotalsRow({ label, computed, reported }: { label: string; computed: string; reported?: string | null }) {
  const differs = reported !== undefined && reported !== null && reported !== computed;
  return (
    <View style={{ flexDirection: 'row', gap: space.sm, paddingVertical: 3 }}>
      <Txt variant="small" style={{ flex: 1 }}>
        {label}
      </Txt>
      <Txt variant="small" figures style={{ width: AMOUNT_COL, textAlign: 'right' }}>
        {amount(computed)}
      </Txt>
      <Txt variant="small" figures bold={differs} tone={differs ? 'alert' : 'soft'} style={{ width: AMOUNT_COL, textAlign: 'right' }}>
        {reported === undefined ? '' : reported === null ? '—' : amount(reported)}
      </Txt>
    </View>
  );
}

/** Lines shown before "Show all": a long return folds so the totals and notes stay near. */
const LINES_FOLDED = 15;

function Lines({ d }: { d: CaseDetail }) {
  const t = d.return.totals;
  const [all, setAll] = useState(false);
  const fold = d.lineItems.length > LINES_FOLDED + 5 && !all;
  const shown = fold ? d.lineItems.slice(0, LINES_FOLDED) : d.lineItems;
  return (
    <Section title="The return as filed" testID="case-lines" right={<Txt variant="small" tone="soft">{`${d.lineItems.length} lines`}</Txt>}>
      <View>
        {shown.map((l) => (
          <View key={l.lineNo} style={{ flexDirection: 'row', gap: space.sm, paddingVertical: 4, borderBottomWidth: 1, borderBottomColor: colours.line }}>
            <Txt variant="small" figures tone="faint" style={{ width: 28 }}>
              {l.lineNo}
            </Txt>
            <View style={{ flex: 1 }}>
              <Txt variant="small">{LINE_CODE_DEFS[l.lineCode].label}</Txt>
              <Txt variant="caption" figures tone="faint">
                {l.lineCode}
              </Txt>
            </View>
            <Txt figures style={{ textAlign: 'right' }}>
              {amount(l.amount)}
            </Txt>
          </View>
        ))}
        {d.lineItems.length > LINES_FOLDED + 5 && (
          <Pressable accessibilityRole="button" onPress={() => setAll(!all)} testID="lines-toggle" style={{ paddingTop: space.sm }}>
            <Txt variant="small" bold tone="brass">
              {all ? 'Show fewer lines ▴' : `Show all ${d.lineItems.length} lines ▾`}
            </Txt>
          </Pressable>
        )}
      </View>
      <View style={{ gap: 0 }}>
        <View style={{ flexDirection: 'row', gap: space.sm }}>
          <Txt variant="caption" bold tone="soft" style={{ flex: 1 }}>
            TOTALS
          </Txt>
          <Txt variant="caption" bold tone="soft" style={{ width: AMOUNT_COL, textAlign: 'right' }}>
            BY THE RULES
          </Txt>
          <Txt variant="caption" bold tone="soft" style={{ width: AMOUNT_COL, textAlign: 'right' }}>
            AS REPORTED
          </Txt>
        </View>
        <TotalsRow label="Income" computed={t.income} reported={t.reportedIncome} />
        <TotalsRow label="Deductions" computed={t.deductions} reported={t.reportedDeductions} />
        <TotalsRow label="Taxable" computed={t.taxable} />
        <TotalsRow label="Tax" computed={t.tax} />
        <TotalsRow label="Tax withheld" computed={t.withheld} />
        <TotalsRow label="Refund" computed={t.refund} reported={t.reportedRefund} />
      </View>
    </Section>
  );
}

function CloseForm({ caseId, to, onDone, onCancel }: { caseId: string; to: 'closed_no_change' | 'closed_adjusted'; onDone(): void; onCancel(): void }) {
  const move = useTransition(caseId);
  const form = useForm<TransitionRequest>({ resolver: zodResolver(TransitionRequestSchema), defaultValues: { to, outcome: '', adjustedAmount: undefined } });
  const submit = form.handleSubmit((v) => move.mutate(v, { onSuccess: onDone }));
  return (
    <View style={{ gap: space.md, paddingTop: space.md, borderTopWidth: 1, borderTopColor: colours.line }} testID="close-form">
      <Txt bold>{to === 'closed_adjusted' ? 'Close with an adjustment' : 'Close with no change'}</Txt>
      <FormField
        control={form.control}
        name="outcome"
        testID="close-outcome"
        label="What was found"
        multiline
        numberOfLines={3}
        style={{ minHeight: 76, textAlignVertical: 'top' }}
      />
      {to === 'closed_adjusted' && (
        <FormField
          control={form.control}
          name="adjustedAmount"
          toValue={(v) => (v.trim() === '' ? undefined : v.trim())}
          testID="close-amount"
          label="Adjusted amount of tax"
          placeholder="e.g. 1250.00"
          keyboardType="decimal-pad"
          style={{ fontFamily: 'PlexMono' }}
        />
      )}
      {move.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {move.error.message}
        </Txt>
      )}
      <View style={{ flexDirection: 'row', gap: space.sm }}>
        <Button label="Close the case" testID="close-submit" onPress={submit} busy={move.isPending} />
        <Button kind="quiet" label="Cancel" onPress={onCancel} />
      </View>
    </View>
  );
}

function Actions({ d, onChanged }: { d: CaseDetail; onChanged(message: string): void }) {
  const claim = useClaim(d.id);
  const move = useTransition(d.id);
  const assign = useAssign(d.id);
  const examiners = useExaminers();
  const [closing, setClosing] = useState<'closed_no_change' | 'closed_adjusted' | null>(null);
  const [target, setTarget] = useState<string | undefined>(undefined);
  const a = d.actions;
  const simple = a.transitions.filter((t) => t.to !== 'closed_no_change' && t.to !== 'closed_adjusted');
  const closes = a.transitions.filter((t) => t.to === 'closed_no_change' || t.to === 'closed_adjusted');
  const others = (examiners.data?.items ?? []).filter((e) => e.id !== d.assignee?.id);
  const nothing = !a.claim && !a.assign && a.transitions.length === 0;
  const error = claim.error ?? move.error ?? assign.error;
  const finished = isFinalState(d.state);
  return (
    <Section title="Actions" testID="case-actions">
      {finished && (
        <View style={{ gap: 2 }} testID="case-outcome">
          <Txt bold>{CASE_STATE_LABELS[d.state]}</Txt>
          {d.outcome && <Txt>{d.outcome}</Txt>}
          {d.adjustedAmount && (
            <Txt figures bold>
              Adjusted amount {amount(d.adjustedAmount)}
            </Txt>
          )}
          {d.closedAt && (
            <Txt variant="small" tone="soft">
              Finished {when(d.closedAt)}
            </Txt>
          )}
        </View>
      )}
      {nothing && !finished && (
        <Txt tone="soft" testID="case-no-actions">
          {d.assignee ? `This case is with ${d.assignee.name}; only they or a supervisor can work on it. You can read it.` : 'You can read this case.'}
        </Txt>
      )}
      {a.claim && (
        <View style={{ gap: space.xs }}>
          <Button
            label="Claim this case"
            testID="case-claim"
            busy={claim.isPending}
            onPress={() => claim.mutate(undefined, { onSuccess: () => onChanged('The case is yours now.') })}
            style={{ alignSelf: 'flex-start' }}
          />
          <Txt variant="small" tone="soft">
            Claiming puts the case in your name, so you can review it, write notes and send letters.
          </Txt>
        </View>
      )}
      {(simple.length > 0 || closes.length > 0) && (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          {simple.map((t) => (
            <Button
              key={t.to}
              kind={t.to === 'in_review' ? 'primary' : 'secondary'}
              label={t.label}
              testID={`case-move-${t.to}`}
              busy={move.isPending && move.variables?.to === t.to}
              onPress={() => move.mutate({ to: t.to }, { onSuccess: () => onChanged(`The case is now ${CASE_STATE_LABELS[t.to].toLowerCase()}.`) })}
            />
          ))}
          {closes.map((t) => (
            <Button
              key={t.to}
              kind={closing === t.to ? 'primary' : 'secondary'}
              label={t.label}
              testID={`case-move-${t.to}`}
              onPress={() => setClosing(closing === t.to ? null : (t.to as typeof closing))}
            />
          ))}
        </View>
      )}
      {closing && (
        <CloseForm
          caseId={d.id}
          to={closing}
          onCancel={() => setClosing(null)}
          onDone={() => {
            setClosing(null);
            onChanged(`The case is ${CASE_STATE_LABELS[closing].toLowerCase()}.`);
          }}
        />
      )}
      {(d.state === 'in_review' || d.state === 'awaiting_reply') && a.canAct && (
        <Txt variant="small" tone="soft">
          To ask the taxpayer for records or to refer the case, use Letters.
        </Txt>
      )}
      {a.assign && (
        <View style={{ gap: space.sm, paddingTop: space.sm, borderTopWidth: 1, borderTopColor: colours.line }} testID="case-assign">
          <ChoiceRow
            label={d.assignee ? 'Move to another examiner' : 'Give to an examiner'}
            options={others.map((e) => ({ value: e.id, label: e.displayName }))}
            value={target}
            onChange={setTarget}
            testID="case-assign-to"
          />
          <Button
            kind="secondary"
            label={target ? `${d.assignee ? 'Move' : 'Give'} to ${others.find((e) => e.id === target)?.displayName ?? ''}` : 'Choose an examiner'}
            disabled={!target}
            busy={assign.isPending}
            testID="case-assign-submit"
            onPress={() => target && assign.mutate(target, { onSuccess: () => onChanged('The case was assigned.') })}
            style={{ alignSelf: 'flex-start' }}
          />
        </View>
      )}
      {error && (
        <Txt tone="alert" accessibilityRole="alert" testID="case-action-error">
          {error.message}
        </Txt>
      )}
    </Section>
  );
}

function Notes({ d }: { d: CaseDetail }) {
  const add = useAddNote(d.id);
  const form = useForm<NoteRequest>({ resolver: zodResolver(NoteRequestSchema), defaultValues: { text: '' } });
  const submit = form.handleSubmit((v) => add.mutate(v.text, { onSuccess: () => form.reset({ text: '' }) }));
  return (
    <Section
      title="Notes"
      testID="case-notes"
      right={
        <Txt variant="small" tone="soft">
          {d.notes.length ? `${d.notes.length}` : ''}
        </Txt>
      }
    >
      {d.notes.length === 0 && <Txt tone="soft">No notes yet.</Txt>}
      {d.notes.map((n) => (
        <View key={n.id} style={{ gap: 2, paddingBottom: space.sm, borderBottomWidth: 1, borderBottomColor: colours.line }} testID={`note-item-${n.id}`}>
          <Txt variant="small" tone="soft">
            <Txt variant="small" bold>
              {n.authorName}
            </Txt>{' '}
            ·{' '}
            <Txt variant="small" figures tone="soft">
              {when(n.at)}
            </Txt>
          </Txt>
          <Txt>{n.text}</Txt>
        </View>
      ))}
      {d.actions.note ? (
        <View style={{ gap: space.sm }}>
          <FormField
            control={form.control}
            name="text"
            testID="note-text"
            label="Add a note"
            multiline
            numberOfLines={3}
            style={{ minHeight: 76, textAlignVertical: 'top' }}
            hint="Notes are kept with the case as written: they cannot be edited or removed later."
          />
          {add.error && (
            <Txt tone="alert" accessibilityRole="alert">
              {add.error.message}
            </Txt>
          )}
          <Button kind="secondary" label="Add note" testID="note-submit" busy={add.isPending} onPress={submit} style={{ alignSelf: 'flex-start' }} />
        </View>
      ) : (
        <Txt variant="small" tone="soft">
          Only the case&apos;s examiner or a supervisor can add notes.
        </Txt>
      )}
    </Section>
  );
}

function History({ d }: { d: CaseDetail }) {
  return (
    <Section title="History" testID="case-history">
      {[...d.history].reverse().map((h) => (
        <View key={h.id} style={{ flexDirection: 'row', gap: space.sm }}>
          <View style={{ width: 10, alignItems: 'center', paddingTop: 6 }}>
            <View style={{ width: 8, height: 8, borderRadius: 4, backgroundColor: h.kind.includes('assign') ? colours.brass : colours.cord }} />
          </View>
          <View style={{ flex: 1, gap: 0 }}>
            <Txt variant="small">{h.summary}</Txt>
            <Txt variant="caption" figures tone="faint">
              {when(h.at)}
            </Txt>
          </View>
        </View>
      ))}
    </Section>
  );
}

/** One case: why it scored, the return, the work on it, and what the caller may do next. */
export function CaseScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const caseId = Array.isArray(id) ? id[0] : (id ?? '');
  const c = useCase(caseId);
  const wide = useIsWide();
  const [notice, setNotice] = useState<string | null>(null);
  if (c.isPending) return <Txt tone="soft">Loading the case…</Txt>;
  if (c.error || !c.data) {
    return (
      <View style={{ gap: space.md }}>
        <Txt tone="alert" accessibilityRole="alert">
          {c.error?.message ?? 'The case could not be loaded.'}
        </Txt>
        <Link href="/queue">
          <Txt tone="brass" bold>
            ← Back to the queue
          </Txt>
        </Link>
      </View>
    );
  }
  const d = c.data;
  const work = (
    <>
      <Caution />
      {notice && (
        <Txt tone="ok" accessibilityRole="alert" testID="case-notice">
          {notice}
        </Txt>
      )}
      <Actions d={d} onChanged={setNotice} />
    </>
  );
  const why = (
    <>
      <Factors d={d} />
      <Digits d={d} />
    </>
  );
  const record = (
    <>
      {/* LettersPanel: mounted by the letters feature (components/features/letters/letters-panel.tsx) */}
      <LettersPanel caseId={d.id} state={d.state} canAct={d.actions.canAct} />
      <Notes d={d} />
      <History d={d} />
    </>
  );
  return (
    <View style={{ gap: space.lg }} testID="case-screen">
      <Header d={d} />
      <ScoreSummary d={d} />
      {wide ? (
        <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
          <View style={{ flex: 3, gap: space.lg, minWidth: 0 }}>
            {why}
            <Lines d={d} />
          </View>
          <View style={{ flex: 2, gap: space.lg, minWidth: 0 }}>
            {work}
            {record}
          </View>
        </View>
      ) : (
        <View style={{ gap: space.lg }}>
          {work}
          {why}
          <Lines d={d} />
          {record}
        </View>
      )}
    </View>
  );
}
