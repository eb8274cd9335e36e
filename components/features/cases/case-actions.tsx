/**
 * The case's actions: claim, the state moves the server allows now, closing with an
 * outcome, assignment, and a supervisor's reopen. Closing and reopening ask first, in a
 * dialog that says the consequence in words (issue 14).
 */
import { zodResolver } from '@hookform/resolvers/zod';
import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { CASE_STATE_LABELS, isFinalState, REOPEN_STATE, ReopenRequestSchema, type ReopenRequest, type TransitionRequest } from '../../../shared/cases';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { ChoiceRow } from '../../ui/choice-row';
import { ConfirmDialog } from '../../ui/confirm-dialog';
import { FormField } from '../../ui/form-field';
import { Txt } from '../../ui/text';
import { amount, when } from './case-bits';
import { Section } from './case-section';
import { CloseForm as CloseWithLetter } from './close-form';
import { useAssign, useClaim, useExaminers, useReopen, useTransition } from './use-cases';

/** The two closing moves; each has its own form and confirmation. */
export type ClosingMove = 'closed_no_change' | 'closed_adjusted';

/** True for a closing move. */
export function isClosing(to: string): to is ClosingMove {
  return to === 'closed_no_change' || to === 'closed_adjusted';
}

/**
 * Props of a closing form (close-form.tsx): it collects and checks the request and hands it
 * to `onSubmit`; CaseActions then asks for confirmation and sends it, so every closing gets
 * the same confirmation and "Next case".
 */
export interface CloseFormProps {
  caseId: string;
  to: ClosingMove;
  onSubmit(request: TransitionRequest): void;
  onCancel(): void;
}

/** What a closing does, in words, for the confirmation. */
export function closingConsequence(to: ClosingMove, examiner: string | null): string {
  const how = to === 'closed_adjusted' ? 'closed with an adjustment' : 'closed with no change';
  const letter = to === 'closed_adjusted' ? 'the adjustment proposal' : 'the no-change letter';
  return (
    `The case will be finished as ${how}. It leaves the cases being worked, ` +
    `${examiner ? `${examiner} can` : 'nobody can'} no longer move it or send letters on it, and only a supervisor can reopen it. ` +
    `The taxpayer is sent ${letter} at once (kept for post when no e-mail address is on file); a sent letter cannot be withdrawn.`
  );
}

/** The supervisor's reopen: a reason, then the confirmation that sends it. */
function ReopenDialog({ d, onDone, onCancel }: { d: CaseDetail; onDone(): void; onCancel(): void }) {
  const reopen = useReopen(d.id);
  const form = useForm<ReopenRequest>({ resolver: zodResolver(ReopenRequestSchema), defaultValues: { reason: '' } });
  const submit = form.handleSubmit((v) => reopen.mutate(v.reason, { onSuccess: onDone }));
  const back = CASE_STATE_LABELS[REOPEN_STATE].toLowerCase();
  return (
    <ConfirmDialog
      testID="reopen-dialog"
      title="Reopen this finished case?"
      consequence={
        `The case goes back ${back}${d.assignee ? ` with ${d.assignee.name}` : ''}, who can work on it and close it again. ` +
        `Its outcome so far stays in the history with your reason, and letters already sent stay as they were. The reopen is written to the access log.`
      }
      confirmLabel="Reopen the case"
      onConfirm={submit}
      onCancel={onCancel}
      busy={reopen.isPending}
      error={reopen.error?.message}
    >
      <FormField
        control={form.control}
        name="reason"
        testID="reopen-reason"
        label="Why the case is reopened"
        multiline
        numberOfLines={3}
        style={{ minHeight: 76, textAlignVertical: 'top' }}
      />
    </ConfirmDialog>
  );
}

/** What the caller may do with the case now: claim, move, close, assign; a finished case shows its outcome. */
export function CaseActions({
  d,
  onChanged,
  closing,
  onClosing,
  reopening,
  onReopening,
}: {
  d: CaseDetail;
  onChanged(message: string): void;
  /** The closing form that is open (the screen holds it, so the phone's action bar can open it too). */
  closing: ClosingMove | null;
  onClosing(to: ClosingMove | null): void;
  /** The reopen dialog is open (the screen holds it too, for the action bar). */
  reopening: boolean;
  onReopening(open: boolean): void;
}) {
  const claim = useClaim(d.id);
  const move = useTransition(d.id);
  const closeMove = useTransition(d.id);
  const assign = useAssign(d.id);
  const examiners = useExaminers();
  const [asking, setAsking] = useState<TransitionRequest | null>(null);
  const [target, setTarget] = useState<string | undefined>(undefined);
  const a = d.actions;
  const simple = a.transitions.filter((t) => !isClosing(t.to));
  const closes = a.transitions.filter((t) => isClosing(t.to));
  const setClosing = onClosing;
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
              onPress={() => setClosing(closing === t.to ? null : (t.to as ClosingMove))}
            />
          ))}
        </View>
      )}
      {closing && <CloseWithLetter caseId={d.id} to={closing} onCancel={() => setClosing(null)} onSubmit={setAsking} />}
      {asking && isClosing(asking.to) && (
        <ConfirmDialog
          testID="close-confirm"
          title={asking.to === 'closed_adjusted' ? 'Close this case with an adjustment?' : 'Close this case with no change?'}
          consequence={closingConsequence(asking.to, d.assignee?.name ?? null)}
          confirmLabel="Close the case"
          onConfirm={() =>
            closeMove.mutate(asking, {
              onSuccess: () => {
                const to = asking.to;
                setAsking(null);
                setClosing(null);
                onChanged(`The case is ${CASE_STATE_LABELS[to].toLowerCase()}.`);
              },
            })
          }
          onCancel={() => {
            closeMove.reset();
            setAsking(null);
          }}
          busy={closeMove.isPending}
          error={closeMove.error?.message}
        >
          {asking.outcome ? (
            <View style={{ gap: 2 }}>
              <Txt variant="small" tone="soft">
                What was found, as it will be kept
              </Txt>
              <Txt testID="close-confirm-outcome">{asking.outcome}</Txt>
            </View>
          ) : null}
        </ConfirmDialog>
      )}
      {(d.state === 'in_review' || d.state === 'awaiting_reply') && a.canAct && (
        <Txt variant="small" tone="soft">
          To ask the taxpayer for records or to refer the case, use Letters, just below.
        </Txt>
      )}
      {a.reopen && (
        <View style={{ gap: space.xs }}>
          <Button kind="secondary" label="Reopen the case…" testID="case-reopen" onPress={() => onReopening(true)} style={{ alignSelf: 'flex-start' }} />
          <Txt variant="small" tone="soft">
            A supervisor can put a finished case back in review, with a reason kept in its history.
          </Txt>
        </View>
      )}
      {reopening && (
        <ReopenDialog
          d={d}
          onCancel={() => onReopening(false)}
          onDone={() => {
            onReopening(false);
            onChanged(`The case is reopened: it is ${CASE_STATE_LABELS[REOPEN_STATE].toLowerCase()} again.`);
          }}
        />
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
