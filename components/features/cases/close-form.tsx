/**
 * Closing a case with its letter (issue 13, issue 14): what was found and, for an adjustment,
 * the corrected figures by line code. The form shows, as the examiner types, the return as
 * filed beside the return as corrected by the shared rules (shared/returns/corrections.ts),
 * with the difference in tax that becomes the adjusted amount; then the letter the taxpayer
 * will receive (no-change letter or adjustment proposal), read before anything is sent. Its
 * request goes to CaseActions (case-actions.tsx), which asks for the final confirmation.
 */
import { zodResolver } from '@hookform/resolvers/zod';
import { useMemo, useState } from 'react';
import { useForm } from 'react-hook-form';
import { View } from 'react-native';
import { TransitionRequestSchema, type TransitionRequest } from '../../../shared/cases';
import { applyCorrections, CORRECTABLE_LINE_CODES, CorrectionSchema, signedMoney, type Correction } from '../../../shared/returns/corrections';
import { LINE_CODE_DEFS, type CentsLine, type LineCode } from '../../../shared/returns/line-codes';
import { centsFromDecimal } from '../../../shared/returns/money';
import { money } from '../../../shared/scoring/format';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Field } from '../../ui/field';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { LetterPreviewBox } from '../letters/letter-text';
import { usePreviewClosingLetter, usePreviewFirst } from '../letters/use-letters';
import type { CloseFormProps } from './case-actions';
import { useCase } from './use-cases';

/** The return's lines as filed, in cents (from the case the screen already holds). */
function useFiledLines(caseId: string): CentsLine[] {
  const d = useCase(caseId).data;
  return useMemo(
    () =>
      (d?.lineItems ?? []).flatMap((l) => {
        const cents = centsFromDecimal(l.amount);
        return Number.isNaN(cents) ? [] : [{ code: l.lineCode as LineCode, cents }];
      }),
    [d],
  );
}

/**
 * One row of the side-by-side: the label on its own line above the three figures, so long
 * amounts never run past the edge of the actions column (narrow on every screen).
 */
function FigureRow({ label, filed, corrected, bold, testID }: { label: string; filed: number; corrected: number; bold?: boolean; testID?: string }) {
  const d = corrected - filed;
  const figure = (text: string, tone: 'ink' | 'soft' = 'ink') => (
    <Txt variant="small" figures bold={bold} tone={tone} style={{ flex: 1, textAlign: 'right' }}>
      {text}
    </Txt>
  );
  return (
    <View style={{ paddingVertical: 3, borderTopWidth: 1, borderTopColor: colours.line }} testID={testID}>
      <Txt variant="small" bold={bold}>
        {label}
      </Txt>
      <View style={{ flexDirection: 'row', gap: space.xs }}>
        {figure(money(filed))}
        {figure(money(corrected))}
        {figure(signedMoney(d), d === 0 ? 'soft' : 'ink')}
      </View>
    </View>
  );
}

/** Closing: what was found; for an adjustment the corrected figures; then the letter's preview. */
export function CloseForm({ caseId, to, onSubmit, onCancel }: CloseFormProps) {
  const wide = useIsWide();
  const filedLines = useFiledLines(caseId);
  const preview = usePreviewClosingLetter(caseId);
  const form = useForm<TransitionRequest>({
    resolver: zodResolver(TransitionRequestSchema),
    mode: 'onChange',
    defaultValues: to === 'closed_adjusted' ? { to, outcome: '', corrections: [] } : { to, outcome: '' },
  });
  // Typed amounts by code; the form's `corrections` holds the ones filled in, in form order.
  const [typed, setTyped] = useState<Partial<Record<LineCode, string>>>({});
  const values = form.watch();
  // A preview stands for the values it was made from: any change asks for a new one.
  const { ready, submit } = usePreviewFirst(form, preview, onSubmit);

  const filedByCode = useMemo(() => {
    const m = new Map<LineCode, number>();
    for (const l of filedLines) m.set(l.code, (m.get(l.code) ?? 0) + l.cents);
    return m;
  }, [filedLines]);

  const setAmount = (code: LineCode, text: string) => {
    const next = { ...typed, [code]: text };
    setTyped(next);
    const list = CORRECTABLE_LINE_CODES.flatMap((c) => (next[c]?.trim() ? [{ lineCode: c, amount: next[c]!.trim() }] : []));
    form.setValue('corrections', list, { shouldValidate: true, shouldDirty: true });
  };
  const corrections = (values.corrections ?? []) as Correction[];
  const problemOf = (code: LineCode): string | undefined => {
    const text = typed[code]?.trim();
    if (!text) return undefined;
    const r = CorrectionSchema.safeParse({ lineCode: code, amount: text });
    return r.success ? undefined : r.error.issues[0]?.message;
  };
  const usable = corrections.filter((c) => CorrectionSchema.safeParse(c).success);
  const figures = to === 'closed_adjusted' ? applyCorrections(filedLines, usable) : null;
  const correctionsError = (form.formState.errors.corrections as { message?: string } | undefined)?.message;
  const sameTax = figures !== null && usable.length > 0 && figures.taxDifference === 0;

  return (
    <View style={{ gap: space.md, paddingTop: space.md, borderTopWidth: 1, borderTopColor: colours.line }} testID="close-form">
      <Txt bold>{to === 'closed_adjusted' ? 'Close with an adjustment' : 'Close with no change'}</Txt>
      <FormField
        control={form.control}
        name="outcome"
        testID="close-outcome"
        label="What was found (kept with the case, not put in the letter)"
        multiline
        numberOfLines={3}
        style={{ minHeight: 76, textAlignVertical: 'top' }}
      />
      {figures && (
        <View style={{ gap: space.sm }} testID="close-corrections">
          <Txt variant="small" bold>
            Corrected figures
          </Txt>
          <Txt variant="small" tone="soft">
            Give the corrected amount of each line that changes; leave the others empty. Totals, taxable income, tax and refund are worked out by the office’s
            rules, and the difference in tax becomes the adjusted amount.
          </Txt>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
            {CORRECTABLE_LINE_CODES.map((code) => (
              <View key={code} style={{ width: wide ? 220 : '100%', gap: 2 }}>
                <Field
                  testID={`close-line-${code}`}
                  label={`${LINE_CODE_DEFS[code].label} (${code})`}
                  value={typed[code] ?? ''}
                  onChangeText={(t) => setAmount(code, t)}
                  placeholder={`as filed ${money(filedByCode.get(code) ?? 0)}`}
                  keyboardType="decimal-pad"
                  autoCapitalize="none"
                  error={problemOf(code)}
                  style={{ fontFamily: 'PlexMono' }}
                />
              </View>
            ))}
          </View>
          {correctionsError && (
            <Txt variant="small" tone="alert" accessibilityRole="alert" testID="close-corrections-error">
              {correctionsError}
            </Txt>
          )}
          <View style={{ gap: 0, padding: space.sm, backgroundColor: colours.paper, borderRadius: radius.sm }} testID="close-figures">
            <View style={{ flexDirection: 'row', gap: space.xs, paddingBottom: 3 }}>
              {['As filed', 'As corrected', 'Difference'].map((h) => (
                <Txt key={h} variant="caption" tone="soft" style={{ flex: 1, textAlign: 'right' }}>
                  {h}
                </Txt>
              ))}
            </View>
            {figures.lines
              .filter((l) => l.changed)
              .map((l) => (
                <FigureRow key={l.code} label={l.label} filed={l.filed} corrected={l.corrected} />
              ))}
            {figures.figures.map((f) => (
              <FigureRow
                key={f.key}
                label={f.label}
                filed={f.filed}
                corrected={f.corrected}
                bold={f.key === 'tax'}

                testID={`close-figure-${f.key}`}
              />
            ))}
          </View>
          <Txt bold testID="close-tax-difference">
            {usable.length === 0
              ? 'No corrected figure yet.'
              : sameTax
                ? 'These corrections do not change the tax: close with no change instead, or check the amounts.'
                : `Adjusted amount: ${signedMoney(figures.taxDifference)} (the tax ${figures.taxDifference > 0 ? 'rises' : 'falls'} from ${money(figures.filed.tax)} to ${money(figures.corrected.tax)})`}
          </Txt>
        </View>
      )}
      {preview.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {preview.error.message}
        </Txt>
      )}
      {ready && preview.data && <LetterPreviewBox preview={preview.data} testID="close-letter-preview" partsID="close-letter" />}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        <Button
          label={ready ? 'Close the case and send the letter…' : 'Preview the letter'}
          testID={ready ? 'close-submit' : 'close-preview'}
          onPress={submit}
          busy={preview.isPending}
        />
        <Button kind="quiet" label="Cancel" onPress={onCancel} />
      </View>
    </View>
  );
}
