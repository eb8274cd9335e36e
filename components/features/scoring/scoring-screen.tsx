import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect, useState, type ReactNode } from 'react';
import { Controller, useForm, useWatch, type Control, type FieldPath } from 'react-hook-form';
import { View } from 'react-native';
import type { z } from 'zod';
import type { Preview, WeightFitDto } from '../../../shared/programme/api';
import { MAX_INTERVAL_POINTS } from '../../../shared/programme/weights';
import { capacityTarget } from '../../../shared/programme/selection';
import { money } from '../../../shared/scoring/format';
import { NewProfileSchema, type NewProfileInput, type Performance, type ProfileVersion } from '../../../shared/scoring/profile-api';
import { COMPONENT_LABELS, COMPONENTS, ScoringSettingsSchema, type ScoringSettings } from '../../../shared/scoring/settings';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { ChoiceRow } from '../../ui/choice-row';
import { ConfirmDialog } from '../../ui/confirm-dialog';
import { Field } from '../../ui/field';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { useBatches } from '../batches/use-batches';
import { useActivateProfile, useAddProfile, usePerformance, usePreview, useProfiles } from './use-scoring';

const num = (v: string) => (v.trim() === '' || Number.isNaN(Number(v)) ? (v as unknown as number) : Number(v));
const pct = (x: number, digits = 0) => `${(x * 100).toFixed(digits)} %`;

/** The selection a profile makes, in words (for the confirmation and the versions list). */
export function selectionInWords(s: Pick<ScoringSettings, 'selectionCut' | 'capacity' | 'randomShare'>): string {
  const main = s.capacity
    ? `the ${capacityTarget(s.capacity)} highest-scoring returns of each batch (${s.capacity.casesPerMonth} cases a month for ${s.capacity.months} months; equal scores ordered by priority)`
    : `every return scoring ${s.selectionCut} or more`;
  return `${main}, and ${pct(s.randomShare, s.randomShare < 0.01 ? 1 : 0)} of the batch below that at random for review`;
}

type FormIn = z.input<typeof NewProfileSchema>;

/** One numeric setting of the form, in a column as wide as its neighbours. */
function NumberField({ control, name, testID, label }: { control: Control<FormIn>; name: FieldPath<FormIn>; testID: string; label: string }) {
  const wide = useIsWide();
  return (
    <View style={{ width: wide ? 230 : '100%' }}>
      <FormField control={control} name={name} toValue={num} testID={testID} label={label} keyboardType="numeric" />
    </View>
  );
}

/** A factor's row in the suggestion and performance lists: its name, then its figures beside it (wide) or under it. */
function FactorRow({ label, children }: { label: string; children: ReactNode }) {
  const wide = useIsWide();
  return (
    <View
      style={{
        flexDirection: wide ? 'row' : 'column',
        gap: wide ? space.md : 0,
        paddingVertical: space.xs,
        borderTopWidth: 1,
        borderTopColor: colours.line,
      }}
    >
      <Txt style={{ flex: 1 }}>{label}</Txt>
      {children}
    </View>
  );
}

function PreviewPanel({ preview }: { preview: Preview }) {
  return (
    <View style={{ gap: space.xs, padding: space.sm, backgroundColor: colours.paper, borderWidth: 1, borderColor: colours.line }} testID="profile-preview">
      <Txt bold>
        Would select {preview.selected} of {preview.scored} returns{preview.cut !== null ? ` (cut at ${preview.cut})` : ''}
      </Txt>
      <Txt figures testID="preview-counts">
        {preview.stay} stay · {preview.leave} leave · {preview.join} join today&apos;s selection (version {preview.version})
      </Txt>
      <Txt variant="small">
        {preview.expected
          ? `Expected from the ${preview.expected.closedCases} closed cases so far: about ${preview.expected.adjusted} adjustments (${pct(preview.expected.rate)} of the selection), about ${money(preview.expected.amountCents)} adjusted.`
          : 'Expected yield: not enough closed cases yet.'}
      </Txt>
      <Txt variant="caption" tone={preview.exact ? 'faint' : 'warn'}>
        {preview.note}
        {preview.expected ? ` Method: ${preview.expected.method}.` : ''}
      </Txt>
    </View>
  );
}

function WeightsForm({ active, learned }: { active: ProfileVersion; learned: WeightFitDto | undefined }) {
  const add = useAddProfile();
  const preview = usePreview();
  const batches = useBatches(1, 25);
  const wide = useIsWide();
  const [batchId, setBatchId] = useState<string | undefined>();
  const [pending, setPending] = useState<NewProfileInput | null>(null);
  const form = useForm<FormIn, unknown, NewProfileInput>({
    resolver: zodResolver(NewProfileSchema),
    defaultValues: { settings: active.settings, note: '', activate: true },
  });
  useEffect(() => form.reset({ settings: active.settings, note: '', activate: true }), [active.version]); // eslint-disable-line react-hooks/exhaustive-deps
  const scored = (batches.data?.items ?? []).filter((b) => b.state === 'scored').slice(0, 6);
  const chosen = batchId ?? scored[0]?.id;
  const capacity = useWatch({ control: form.control, name: 'settings.capacity' });
  const fit = learned?.fit;
  const applySuggestions = () => {
    if (!fit) return;
    for (const s of fit.suggestions) form.setValue(`settings.weights.${s.key as (typeof COMPONENTS)[number]}`, s.suggested, { shouldDirty: true });
    form.setValue('note', `Weights from the outcome model on ${learned!.closed} closed cases (${learned!.randomClosed} chosen at random)`);
  };
  const runPreview = async () => {
    if (!chosen || !(await form.trigger('settings'))) return;
    const settings = ScoringSettingsSchema.parse(form.getValues('settings'));
    preview.mutate({ batchId: chosen, settings });
  };
  const submit = form.handleSubmit((v) => setPending(v));
  return (
    <Card style={{ gap: space.md }} testID="weights-form">
      <Txt variant="title" bold>
        Weights of version {active.version}
      </Txt>
      <Txt variant="small" tone="soft">
        Each factor adds up to this many points at full strength; the risk score is the sum, capped at 100. Saving makes a new version: scores already made keep
        the version they were made with.
      </Txt>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        {COMPONENTS.map((key) => (
          <NumberField key={key} control={form.control} name={`settings.weights.${key}`} testID={`weight-${key}`} label={COMPONENT_LABELS[key]} />
        ))}
      </View>
      <ChoiceRow
        label="Which returns get a case"
        testID="selection-mode"
        value={capacity ? 'capacity' : 'cut'}
        onChange={(v) =>
          form.setValue('settings.capacity', v === 'capacity' ? (capacity ?? { casesPerMonth: 20, months: 3 }) : null, {
            shouldDirty: true,
            shouldValidate: true,
          })
        }
        options={[
          { value: 'cut', label: 'Every return at or above a score' },
          { value: 'capacity', label: 'As many as the team can take' },
        ]}
      />
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        {capacity ? (
          <>
            <NumberField control={form.control} name="settings.capacity.casesPerMonth" testID="capacity-per-month" label="Cases the team can take a month" />
            <NumberField control={form.control} name="settings.capacity.months" testID="capacity-months" label="Months one batch should feed" />
          </>
        ) : (
          <NumberField control={form.control} name="settings.selectionCut" testID="selection-cut" label="Open a case at or above (score)" />
        )}
        <View style={{ width: wide ? 230 : '100%' }}>
          <Controller
            control={form.control}
            name="settings.randomShare"
            render={({ field, fieldState }) => (
              <Field
                label="Chosen at random for review (% of a batch)"
                testID="random-share"
                keyboardType="numeric"
                value={typeof field.value === 'number' ? String(Math.round(field.value * 1000) / 10) : String(field.value ?? '')}
                onChangeText={(t) => field.onChange(t.trim() === '' || Number.isNaN(Number(t)) ? t : Number(t) / 100)}
                onBlur={field.onBlur}
                error={fieldState.error?.message?.replace(/0\.2\b/, '20 %')}
              />
            )}
          />
        </View>
      </View>
      <View style={{ gap: space.sm, borderTopWidth: 1, borderTopColor: colours.line, paddingTop: space.sm }}>
        <Txt bold>Preview before saving</Txt>
        {scored.length === 0 ? (
          <Txt variant="small" tone="soft">
            No scored batch to preview on yet.
          </Txt>
        ) : (
          <ChoiceRow
            label="On batch"
            testID="preview-batch"
            value={chosen}
            onChange={setBatchId}
            options={scored.map((b) => ({ value: b.id, label: `${b.label} (${b.counts.returns})` }))}
          />
        )}
        <View style={{ flexDirection: 'row' }}>
          <Button kind="secondary" testID="run-preview" label="Preview" onPress={runPreview} busy={preview.isPending} disabled={!chosen} />
        </View>
        {preview.error && <Txt tone="alert">{preview.error.message}</Txt>}
        {preview.data && <PreviewPanel preview={preview.data} />}
      </View>
      <FormField control={form.control} name="note" testID="profile-note" label="Why the change" />
      {add.isSuccess && <Txt tone="ok">Saved as version {add.data.version}; new batches are scored with it.</Txt>}
      <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
        <Button testID="save-profile" label="Save as new version" onPress={submit} />
        {fit && <Button kind="secondary" testID="apply-suggestions" label="Fill in the suggested weights" onPress={applySuggestions} />}
      </View>
      {pending && (
        <ConfirmDialog
          testID="confirm-save"
          title="Save these settings as a new version and make it active?"
          consequence={`From then on every batch loaded is scored with it: a case is opened for ${selectionInWords(pending.settings)}. Batches already scored keep their scores and cases until someone re-scores them.`}
          confirmLabel="Save and make active"
          busy={add.isPending}
          error={add.error?.message}
          onConfirm={() => add.mutate(pending, { onSuccess: () => setPending(null) })}
          onCancel={() => {
            add.reset();
            setPending(null);
          }}
        />
      )}
    </Card>
  );
}

/** The outcome model's suggested weights with intervals, and the back-test. */
function SuggestionCard({ learned }: { learned: WeightFitDto }) {
  const fit = learned.fit;
  return (
    <Card style={{ gap: space.sm }} testID="weight-suggestion">
      <Txt variant="title" bold>
        Weights the outcomes suggest
      </Txt>
      {!fit ? (
        <Txt tone="soft">
          Not enough closed cases yet: {learned.closed} closed ({learned.randomClosed} chosen at random); a fit needs {learned.minClosed}, with at least 5
          adjusted.
        </Txt>
      ) : (
        <>
          <Txt variant="small" tone="soft">
            Fitted on {fit.fitted} of {learned.closed} closed cases; {learned.randomClosed} of them were chosen at random and each stands for the returns below
            the cut it was drawn from, so the fit describes every return, not only those the score picked. Each weight is shown with its 95 % interval; where
            that interval is wider than {MAX_INTERVAL_POINTS} points the weight is kept as it is. Method: {fit.method}. Nothing changes until you save a new
            version.
          </Txt>
          {fit.suggestions.map((s) => (
            <FactorRow key={s.key} label={s.label}>
              <Txt
                variant="small"
                figures
                bold={s.suggested !== s.current}
                tone={s.suggested > s.current ? 'ok' : s.suggested < s.current ? 'warn' : 'soft'}
                style={{ width: 150 }}
              >
                {s.current} → {s.suggested} points
              </Txt>
              <Txt variant="small" figures={s.enoughData} tone="soft" style={{ width: 190 }}>
                {s.enoughData ? `95 %: ${s.low} to ${s.high}` : 'kept: too few cases with this factor to say'}
              </Txt>
            </FactorRow>
          ))}
          <View style={{ gap: 2, paddingTop: space.xs, borderTopWidth: 1, borderTopColor: colours.line }} testID="back-test">
            <Txt bold>Back-test on {fit.heldBack} closed cases held back from the fit</Txt>
            <Txt variant="small" figures>
              Top {fit.backTest.current.k} by the current weights: {pct(fit.backTest.current.precisionAtK)} adjusted, {money(fit.backTest.current.yieldCents)}{' '}
              adjusted in all
            </Txt>
            <Txt variant="small" figures>
              Top {fit.backTest.suggested.k} by the suggested weights: {pct(fit.backTest.suggested.precisionAtK)} adjusted,{' '}
              {money(fit.backTest.suggested.yieldCents)} adjusted in all
            </Txt>
          </View>
        </>
      )}
    </Card>
  );
}

function PerformanceTable({ p }: { p: Performance }) {
  return (
    <Card style={{ gap: space.sm }} testID="factor-performance">
      <Txt variant="title" bold>
        How the factors did
      </Txt>
      <Txt variant="small" tone="soft">
        {p.closedCases} finished case{p.closedCases === 1 ? '' : 's'}, {p.adjustedCases} adjusted
        {p.baseRate !== null ? ` (${Math.round(p.baseRate * 100)} %)` : ''}. These counts come from cases the score picked, so they favour the current weights;
        the suggestion above corrects for that.
      </Txt>
      {p.factors.map((f) => (
        <FactorRow key={f.key} label={f.label}>
          <Txt variant="small" figures style={{ width: 170 }}>
            {f.adjusted}/{f.flagged} adjusted{f.adjustedRate !== null ? ` (${Math.round(f.adjustedRate * 100)} %)` : ''}
          </Txt>
        </FactorRow>
      ))}
    </Card>
  );
}

/** Supervisor's screen: the scoring profile, its versions, and what closed cases say about it. */
export function ScoringScreen() {
  const profiles = useProfiles();
  const performance = usePerformance();
  const activate = useActivateProfile();
  const wide = useIsWide();
  const [confirming, setConfirming] = useState<ProfileVersion | null>(null);
  const active = profiles.data?.items.find((p) => p.active);
  return (
    <View style={{ gap: space.lg }}>
      <View>
        <Txt variant="display" bold accessibilityRole="header">
          Scoring profile
        </Txt>
        <Txt tone="soft">
          The weights that turn digit tests and risk factors into the queue&apos;s order. A score selects a return for a look; it proves nothing.
        </Txt>
      </View>
      {profiles.error && <Txt tone="alert">{profiles.error.message}</Txt>}
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.lg, alignItems: 'flex-start' }}>
        <View style={{ flex: wide ? 3 : undefined, width: wide ? undefined : '100%', gap: space.lg }}>
          {active && <WeightsForm active={active} learned={performance.data?.learned} />}
          {performance.data && <SuggestionCard learned={performance.data.learned} />}
          {performance.data && <PerformanceTable p={performance.data} />}
        </View>
        <Card style={{ flex: wide ? 2 : undefined, width: wide ? undefined : '100%', gap: space.sm }} testID="profile-versions">
          <Txt variant="title" bold>
            Versions
          </Txt>
          {profiles.data?.items.map((p) => (
            <View key={p.version} style={{ paddingVertical: space.sm, borderTopWidth: 1, borderTopColor: colours.line, gap: 2 }}>
              <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
                <Txt bold figures>
                  v{p.version}
                </Txt>
                {p.active ? (
                  <Txt variant="small" bold tone="ok">
                    active
                  </Txt>
                ) : (
                  <Button kind="quiet" testID={`activate-${p.version}`} label="Make active" onPress={() => setConfirming(p)} />
                )}
              </View>
              <Txt variant="small">{p.note}</Txt>
              <Txt variant="caption" tone="faint">
                {p.authorName ?? 'set up with the product'} · {p.createdAt.slice(0, 10)} ·{' '}
                {p.settings.capacity ? `capacity ${capacityTarget(p.settings.capacity)} a batch` : `cut ${p.settings.selectionCut}`}
              </Txt>
            </View>
          ))}
        </Card>
      </View>
      {confirming && (
        <ConfirmDialog
          testID={`confirm-activate-${confirming.version}`}
          title={`Make version ${confirming.version} the active one?`}
          consequence={`Every batch loaded from now on is scored with it: a case is opened for ${selectionInWords(confirming.settings)}. Batches already scored keep their scores and cases until someone re-scores them.`}
          confirmLabel={`Make version ${confirming.version} active`}
          busy={activate.isPending}
          error={activate.error?.message}
          onConfirm={() => activate.mutate(confirming.version, { onSuccess: () => setConfirming(null) })}
          onCancel={() => {
            activate.reset();
            setConfirming(null);
          }}
        />
      )}
    </View>
  );
}
