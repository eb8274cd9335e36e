/**
 * The letters part of the case screen: letters kept with the case (with their PDFs and the
 * taxpayer's replies), the document-request form while the case is in review, and the
 * referral form while it is in review or awaiting a reply. Mounted by
 * components/features/cases/case-screen.tsx.
 */
import { zodResolver } from '@hookform/resolvers/zod';
import { useMemo, useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { Linking, Pressable, View } from 'react-native';
import type { CaseState } from '../../../shared/cases';
import {
  addDays,
  documentRequestInputSchema,
  DUE_DATE_MAX_DAYS,
  DUE_DATE_MIN_DAYS,
  flaggedLetterWarning,
  isoToday,
  LETTER_KIND_LABELS,
  longDate,
  REFERRAL_UNIT_LABELS,
  REFERRAL_UNITS,
  ReferralInputSchema,
  type DocumentRequestInput,
  type DocumentRequestState,
  type LetterContext,
  type LetterDto,
  type ReferralInput,
} from '../../../shared/letters';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { ConfirmDialog } from '../../ui/confirm-dialog';
import { Field } from '../../ui/field';
import { FormField } from '../../ui/form-field';
import { Txt } from '../../ui/text';
import { LetterPreviewBox } from './letter-text';
import {
  letterPdfUrl,
  replyUploadUrl,
  useLetterContext,
  useLetters,
  usePreviewDocumentRequest,
  usePreviewFirst,
  usePreviewReferral,
  useSendDocumentRequest,
  useSendReferral,
} from './use-letters';

/** Props for {@link LettersPanel}. */
export interface LettersPanelProps {
  caseId: string;
  state: CaseState;
  /** True when the signed-in user may act on this case (its examiner, or a supervisor). */
  canAct: boolean;
}

const REQUEST_STATE_WORDS: Record<DocumentRequestState, { label: string; tone: 'brass' | 'ok' | 'alert' }> = {
  sent: { label: 'Waiting for reply', tone: 'brass' },
  answered: { label: 'Answered', tone: 'ok' },
  expired: { label: 'Due date passed', tone: 'alert' },
};

const kb = (n: number) => (n >= 1024 * 1024 ? `${(n / 1024 / 1024).toFixed(1)} MB` : `${Math.max(1, Math.round(n / 1024))} KB`);
/** "1 December 2026, 22:47" in the reader's time zone. */
const when = (iso: string) => {
  const d = new Date(iso);
  return `${longDate(isoToday(d))}, ${String(d.getHours()).padStart(2, '0')}:${String(d.getMinutes()).padStart(2, '0')}`;
};

/** A text link that opens a file in a new tab (web) or the system viewer. */
function FileLink({ href, label, testID }: { href: string; label: string; testID?: string }) {
  return (
    <Pressable accessibilityRole="link" onPress={() => void Linking.openURL(href)} testID={testID}>
      <Txt bold tone="brass" style={{ textDecorationLine: 'underline' }}>
        {label}
      </Txt>
    </Pressable>
  );
}

function LetterRow({ caseId, letter }: { caseId: string; letter: LetterDto }) {
  const req = letter.documentRequest;
  return (
    <View style={{ gap: space.xs, paddingVertical: space.md, borderTopWidth: 1, borderTopColor: colours.line }} testID={`letter-${letter.id}`}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'baseline', gap: space.sm }}>
        <Txt bold>{LETTER_KIND_LABELS[letter.kind]}</Txt>
        <Txt variant="small" tone="soft">
          {when(letter.createdAt)}
          {letter.createdBy ? ` · ${letter.createdBy.displayName}` : ''}
        </Txt>
        {req && (
          <Txt variant="small" bold tone={REQUEST_STATE_WORDS[req.state].tone}>
            {REQUEST_STATE_WORDS[req.state].label}
          </Txt>
        )}
      </View>
      <Txt variant="small" tone="soft">
        {letter.kind === 'referral_memo' ? `For the ${letter.recipient}` : letter.recipient.includes('@') ? `Sent to ${letter.recipient}` : letter.recipient}
        {req ? ` · due ${longDate(req.dueDate)}` : ''}
      </Txt>
      {req && (
        <View style={{ gap: 2 }}>
          {req.items.map((item, i) => (
            <Txt key={i} variant="small">
              {`${i + 1}. ${item}`}
            </Txt>
          ))}
        </View>
      )}
      <FileLink href={letterPdfUrl(caseId, letter.id)} label={`Open the PDF (${kb(letter.size)})`} testID={`letter-${letter.id}-pdf`} />
      {req && req.uploads.length > 0 && (
        <View style={{ gap: space.xs, marginTop: space.xs, padding: space.sm, backgroundColor: colours.okSoft, borderRadius: radius.sm }}>
          <Txt variant="small" bold testID={`letter-${letter.id}-reply`}>
            {`${req.uploads.length} file${req.uploads.length === 1 ? '' : 's'} in ${req.sends === 1 ? 'one send' : `${req.sends} sends`}` +
              (req.completedBy === 'taxpayer'
                ? `; the taxpayer said that is everything${req.answeredAt ? ` (${when(req.answeredAt)})` : ''}`
                : req.completedBy === 'due-date'
                  ? '; the due date ended the sends'
                  : '; more may come until the due date')}
          </Txt>
          {req.uploads.map((u) => (
            <FileLink key={u.id} href={replyUploadUrl(caseId, u.id)} label={`${req.sends > 1 ? `Send ${u.part}: ` : ''}${u.fileName} (${kb(u.size)})`} />
          ))}
        </View>
      )}
    </View>
  );
}

/** What a letter form needs from the panel, which owns the mutation (see LettersPanel). */
interface FormProps<T> {
  onSubmit(values: T): void;
  busy: boolean;
  error: Error | null;
}

function DocumentRequestForm({ caseId, context, onSubmit, busy, error }: FormProps<DocumentRequestInput> & { caseId: string; context: LetterContext }) {
  // The due-date window by the office's clock, not the browser's (issue 14); with no address
  // on file the form asks for one before Send.
  const schema = useMemo(() => documentRequestInputSchema(() => context.today, { emailRequired: !context.emailOnFile }), [context.today, context.emailOnFile]);
  const form = useForm<DocumentRequestInput>({
    resolver: zodResolver(schema),
    mode: 'onChange',
    defaultValues: { items: [''], dueDate: addDays(context.today, 21), email: '' },
  });
  const preview = usePreviewDocumentRequest(caseId);
  const { ready, submit, change } = usePreviewFirst(form, preview, onSubmit);
  // Items are plain strings (the API's shape), so add and remove work on the array itself
  // instead of useFieldArray, which needs objects.
  const items = form.watch('items');
  const setItems = (next: string[]) => form.setValue('items', next, { shouldDirty: true, shouldValidate: true });
  const itemsError = form.formState.errors.items;
  return (
    <View style={{ gap: space.md }} testID="document-request-form">
      <Txt variant="lead" bold>
        Ask the taxpayer for records
      </Txt>
      <Txt variant="small" tone="soft">
        The letter asks politely for the records below and gives the taxpayer a personal link to upload them, in one go or in parts until the due date. It names
        no score, test or suspicion. You read the letter before it is sent; sending it moves the case to awaiting reply.
      </Txt>
      <View style={{ gap: space.sm }}>
        {items.map((item, i) => {
          const warning = flaggedLetterWarning(item ?? '');
          return (
            <View key={i} style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end' }}>
              <View style={{ flex: 1 }}>
                <FormField
                  control={form.control}
                  name={`items.${i}`}
                  testID={`request-item-${i}`}
                  label={`Record ${i + 1}`}
                  placeholder="e.g. Receipts for vehicle expenses claimed for 2024"
                />
                {/* A soft check: the examiner's own words reach the letter, which must not mention scores or suspicions. */}
                {warning && (
                  <Txt variant="small" tone="warn" testID={`request-item-${i}-warning`}>
                    {warning}
                  </Txt>
                )}
              </View>
              {items.length > 1 && (
                <Button
                  kind="quiet"
                  label="Remove"
                  accessibilityLabel={`Remove record ${i + 1}`}
                  testID={`request-item-${i}-remove`}
                  onPress={() => setItems(items.filter((_x, k) => k !== i))}
                />
              )}
            </View>
          );
        })}
        {itemsError?.message && (
          <Txt variant="small" tone="alert" accessibilityRole="alert">
            {itemsError.message}
          </Txt>
        )}
        {items.length < 12 && (
          <Button
            kind="secondary"
            label="Add another record"
            testID="request-item-add"
            onPress={() => setItems([...items, ''])}
            style={{ alignSelf: 'flex-start' }}
          />
        )}
      </View>
      <Controller
        control={form.control}
        name="dueDate"
        render={({ field, fieldState }) => (
          <Field
            testID="request-due-date"
            label="Due date (YYYY-MM-DD)"
            autoCapitalize="none"
            value={field.value}
            onChangeText={field.onChange}
            onBlur={field.onBlur}
            error={fieldState.error?.message}
            hint={`Between ${longDate(context.earliestDueDate)} and ${longDate(context.latestDueDate)} (${DUE_DATE_MIN_DAYS} to ${DUE_DATE_MAX_DAYS} days from today, ${longDate(context.today)}, by the office’s clock).${field.value && /^\d{4}-\d{2}-\d{2}$/.test(field.value) ? ` The letter will say ${longDate(field.value)}.` : ''}`}
          />
        )}
      />
      <View style={{ gap: space.xs }}>
        {context.emailOnFile ? (
          <Txt variant="small" testID="request-email-on-file">
            {`Address on file: ${context.emailOnFile}. The letter goes there unless you enter another address below.`}
          </Txt>
        ) : (
          <Txt variant="small" tone="warn" testID="request-email-none">
            No e-mail address is on file for this taxpayer. Enter the address the request should go to.
          </Txt>
        )}
        <FormField
          control={form.control}
          name="email"
          testID="request-email"
          label={context.emailOnFile ? 'Send to another address (optional)' : 'Send to'}
          autoCapitalize="none"
          keyboardType="email-address"
          placeholder={context.emailOnFile ? `Leave empty to use ${context.emailOnFile}` : 'name@example.org'}
        />
      </View>
      {preview.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {preview.error.message}
        </Txt>
      )}
      {ready && preview.data && <LetterPreviewBox preview={preview.data} testID="request-preview" />}
      {error && (
        <Txt tone="alert" accessibilityRole="alert">
          {error.message}
        </Txt>
      )}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        <Button
          testID={ready ? 'request-send' : 'request-preview-button'}
          label={ready ? 'Send the request' : 'Preview the letter'}
          onPress={submit}
          busy={busy || preview.isPending}
        />
        {ready && <Button kind="quiet" label="Change it" testID="request-edit" onPress={change} />}
      </View>
    </View>
  );
}

const unitOptions = REFERRAL_UNITS.map((u) => ({ value: u, label: REFERRAL_UNIT_LABELS[u] }));

function ReferralForm({ onSubmit, busy, error }: FormProps<ReferralInput>) {
  const form = useForm<ReferralInput>({ resolver: zodResolver(ReferralInputSchema), defaultValues: { unit: 'field-audit', summary: '' } });
  const submit = form.handleSubmit(onSubmit);
  return (
    <View style={{ gap: space.md }} testID="referral-form">
      <Txt variant="lead" bold>
        Refer to a specialist unit
      </Txt>
      <Txt variant="small" tone="soft">
        The memo carries the case facts, the score breakdown, the digit chart and the case history. Referring finishes the case here.
      </Txt>
      <Controller
        control={form.control}
        name="unit"
        render={({ field }) => <ChoiceRow testID="referral-unit" label="Unit" options={unitOptions} value={field.value} onChange={field.onChange} />}
      />
      <FormField
        control={form.control}
        name="summary"
        testID="referral-summary"
        label="Why the case needs the unit"
        multiline
        numberOfLines={4}
        style={{ minHeight: 96, textAlignVertical: 'top' }}
      />
      {error && (
        <Txt tone="alert" accessibilityRole="alert">
          {error.message}
        </Txt>
      )}
      <Button testID="referral-send" label="Write the memo and refer" onPress={submit} busy={busy} style={{ alignSelf: 'flex-start' }} />
    </View>
  );
}

/** Letters kept with a case and, by state, the forms that make new ones. */
export function LettersPanel({ caseId, state, canAct }: LettersPanelProps) {
  const letters = useLetters(caseId);
  // The mutations live here, not in the forms: a successful send changes the case's state,
  // which unmounts the form, and react-query drops the callbacks of an unmounted caller.
  const sendRequest = useSendDocumentRequest(caseId);
  const refer = useSendReferral(caseId);
  const memoPreview = usePreviewReferral(caseId);
  const [open, setOpen] = useState<'request' | 'referral' | null>(null);
  const [referring, setReferring] = useState<ReferralInput | null>(null);
  const context = useLetterContext(caseId, open === 'request');
  const [notice, setNotice] = useState<string | null>(null);
  const mayRequest = canAct && state === 'in_review';
  const mayRefer = canAct && (state === 'in_review' || state === 'awaiting_reply');
  const done = (message: string) => () => {
    setOpen(null);
    setNotice(message);
  };
  const toggle = (which: 'request' | 'referral') => {
    setNotice(null);
    sendRequest.reset();
    refer.reset();
    setOpen(open === which ? null : which);
  };
  return (
    <Card style={{ gap: space.sm }} testID="letters-panel">
      <Txt variant="title" bold accessibilityRole="header">
        Letters
      </Txt>
      {letters.isPending && <Txt tone="soft">Loading letters…</Txt>}
      {letters.error && <Txt tone="alert">{letters.error.message}</Txt>}
      {letters.data && letters.data.items.length === 0 && <Txt tone="soft">No letters yet.</Txt>}
      {letters.data?.items.map((l) => (
        <LetterRow key={l.id} caseId={caseId} letter={l} />
      ))}
      {notice && (
        <Txt tone="ok" accessibilityRole="alert" testID="letters-notice">
          {notice}
        </Txt>
      )}
      {(mayRequest || mayRefer) && (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, paddingTop: space.sm, borderTopWidth: 1, borderTopColor: colours.line }}>
          {mayRequest && (
            <Button
              kind={open === 'request' ? 'primary' : 'secondary'}
              label="Request documents"
              testID="open-document-request"
              onPress={() => toggle('request')}
            />
          )}
          {mayRefer && (
            <Button kind={open === 'referral' ? 'primary' : 'secondary'} label="Refer the case" testID="open-referral" onPress={() => toggle('referral')} />
          )}
        </View>
      )}
      {open === 'request' && mayRequest && context.isPending && <Txt tone="soft">Loading the address on file…</Txt>}
      {open === 'request' && mayRequest && context.error && <Txt tone="alert">{context.error.message}</Txt>}
      {open === 'request' && mayRequest && context.data && (
        <DocumentRequestForm
          caseId={caseId}
          context={context.data}
          onSubmit={(v) => sendRequest.mutate(v, { onSuccess: done('The request was sent and is kept with the case.') })}
          busy={sendRequest.isPending}
          error={sendRequest.error}
        />
      )}
      {open === 'referral' && mayRefer && (
        <ReferralForm
          onSubmit={(values) => {
            // The memo is read before anything is written (issue 14).
            setReferring(values);
            memoPreview.mutate(values);
          }}
          busy={refer.isPending}
          error={null}
        />
      )}
      {referring && (
        // A referral finishes the case: it asks first, with the consequence in words (issue 14).
        <ConfirmDialog
          testID="referral-confirm"
          title={`Refer this case${referring.unit ? ` to the ${REFERRAL_UNIT_LABELS[referring.unit]}` : ''}?`}
          consequence={
            `The referral memo is written and kept with the case, and the case is finished as referred. ` +
            `It leaves the cases being worked, no more letters can be sent on it, and only a supervisor can reopen it.`
          }
          confirmLabel="Write the memo and refer"
          onConfirm={() =>
            refer.mutate(referring, {
              onSuccess: () => {
                setReferring(null);
                done('The referral memo was written and is kept with the case.')();
              },
            })
          }
          onCancel={() => {
            refer.reset();
            setReferring(null);
          }}
          busy={refer.isPending || memoPreview.isPending}
          error={refer.error?.message ?? memoPreview.error?.message}
        >
          {memoPreview.data ? (
            <LetterPreviewBox preview={memoPreview.data} testID="referral-preview" />
          ) : (
            !memoPreview.error && (
              <Txt variant="small" tone="soft">
                Writing the memo’s preview…
              </Txt>
            )
          )}
        </ConfirmDialog>
      )}
    </Card>
  );
}
