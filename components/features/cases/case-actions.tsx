/**
 * The case's actions: claim, the state moves the server allows now, closing with an
 * outcome, and assignment.
 */
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { CASE_STATE_LABELS, isFinalState, TransitionRequestSchema, type TransitionRequest } from '../../../shared/cases';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { ChoiceRow } from '../../ui/choice-row';
import { FormField } from '../../ui/form-field';
import { Txt } from '../../ui/text';
import { amount, when } from './case-bits';
import { Section } from './case-section';
import { useAssign, useClaim, useExaminers, useTransition } from './use-cases';

/** Closing: what was found and, for an adjustment, the amount; mounted by CaseActions. */
export function CloseForm({ caseId, to, onDone, onCancel }: { caseId: string; to: 'closed_no_change' | 'closed_adjusted'; onDone(): void; onCancel(): void }) {
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

/** What the caller may do with the case now: claim, move, close, assign; a finished case shows its outcome. */
export function CaseActions({ d, onChanged }: { d: CaseDetail; onChanged(message: string): void }) {
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
