import { zodResolver } from '@hookform/resolvers/zod';
import { useEffect } from 'react';
import { useForm } from 'react-hook-form';
import { View } from 'react-native';
import type { z } from 'zod';
import { NewProfileSchema, type NewProfileInput, type Performance, type ProfileVersion } from '../../../shared/scoring/profile-api';
import { COMPONENT_LABELS, COMPONENTS } from '../../../shared/scoring/settings';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { Card } from '../../ui/card';
import { FormField } from '../../ui/form-field';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { useActivateProfile, useAddProfile, usePerformance, useProfiles } from './use-scoring';

const num = (v: string) => (v.trim() === '' || Number.isNaN(Number(v)) ? (v as unknown as number) : Number(v));

function WeightsForm({ active, performance }: { active: ProfileVersion; performance: Performance | undefined }) {
  const add = useAddProfile();
  const wide = useIsWide();
  const form = useForm<z.input<typeof NewProfileSchema>, unknown, NewProfileInput>({
    resolver: zodResolver(NewProfileSchema),
    defaultValues: { settings: active.settings, note: '', activate: true },
  });
  useEffect(() => form.reset({ settings: active.settings, note: '', activate: true }), [active.version]); // eslint-disable-line react-hooks/exhaustive-deps
  const applySuggestions = () => {
    if (!performance) return;
    for (const f of performance.factors) form.setValue(`settings.weights.${f.key}`, f.suggestedWeight, { shouldDirty: true });
    form.setValue('note', `Weights suggested by ${performance.closedCases} closed cases (${performance.adjustedCases} adjusted)`);
  };
  const submit = form.handleSubmit((v) => add.mutate(v));
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
          <View key={key} style={{ width: wide ? 230 : '100%' }}>
            <FormField
              control={form.control}
              name={`settings.weights.${key}`}
              toValue={num}
              testID={`weight-${key}`}
              label={COMPONENT_LABELS[key]}
              keyboardType="numeric"
            />
          </View>
        ))}
      </View>
      <View style={{ width: wide ? 230 : '100%' }}>
        <FormField
          control={form.control}
          name="settings.selectionCut"
          toValue={num}
          testID="selection-cut"
          label="Open a case at or above (score)"
          keyboardType="numeric"
        />
      </View>
      <FormField control={form.control} name="note" testID="profile-note" label="Why the change" />
      {add.error && <Txt tone="alert">{add.error.message}</Txt>}
      {add.isSuccess && <Txt tone="ok">Saved as version {add.data.version}; new batches are scored with it.</Txt>}
      <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
        <Button testID="save-profile" label="Save as new version" onPress={submit} busy={add.isPending} />
        {performance && performance.closedCases > 0 && <Button kind="secondary" label="Fill in the suggested weights" onPress={applySuggestions} />}
      </View>
    </Card>
  );
}

function PerformanceTable({ p }: { p: Performance }) {
  const wide = useIsWide();
  return (
    <Card style={{ gap: space.sm }} testID="factor-performance">
      <Txt variant="title" bold>
        How the factors did
      </Txt>
      <Txt variant="small" tone="soft">
        {p.closedCases} closed case{p.closedCases === 1 ? '' : 's'}, {p.adjustedCases} adjusted
        {p.baseRate !== null ? ` (${Math.round(p.baseRate * 100)} %)` : ''}. A suggestion moves a weight by how much more often the cases a factor flagged ended
        adjusted, within half to double, once it has flagged {p.minEvidence} closed cases. It changes nothing until you save it.
      </Txt>
      {p.factors.map((f) => (
        <View
          key={f.key}
          style={{
            flexDirection: wide ? 'row' : 'column',
            gap: wide ? space.md : 0,
            paddingVertical: space.xs,
            borderTopWidth: 1,
            borderTopColor: colours.line,
          }}
        >
          <Txt style={{ flex: 1 }}>{f.label}</Txt>
          <Txt variant="small" figures style={{ width: 170 }}>
            {f.adjusted}/{f.flagged} adjusted{f.adjustedRate !== null ? ` (${Math.round(f.adjustedRate * 100)} %)` : ''}
          </Txt>
          <Txt
            variant="small"
            figures
            bold={f.suggestedWeight !== f.weight}
            tone={f.suggestedWeight > f.weight ? 'ok' : f.suggestedWeight < f.weight ? 'warn' : 'soft'}
            style={{ width: 150 }}
          >
            {f.weight} → {f.suggestedWeight} points
          </Txt>
        </View>
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
  const active = profiles.data?.items.find((p) => p.active);
  return (
    <View style={{ gap: space.lg }}>
      <View>
        <Txt variant="display" bold accessibilityRole="header">
          Scoring profile
        </Txt>
        <Txt tone="soft">
          The weights that turn digit tests and risk factors into the queue's order. A score selects a return for a look; it proves nothing.
        </Txt>
      </View>
      {profiles.error && <Txt tone="alert">{profiles.error.message}</Txt>}
      <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.lg, alignItems: 'flex-start' }}>
        <View style={{ flex: wide ? 3 : undefined, width: wide ? undefined : '100%', gap: space.lg }}>
          {active && <WeightsForm active={active} performance={performance.data} />}
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
                  <Button kind="quiet" label="Make active" onPress={() => activate.mutate(p.version)} busy={activate.isPending} />
                )}
              </View>
              <Txt variant="small">{p.note}</Txt>
              <Txt variant="caption" tone="faint">
                {p.authorName ?? 'set up with the product'} · {p.createdAt.slice(0, 10)} · cut {p.settings.selectionCut}
              </Txt>
            </View>
          ))}
        </Card>
      </View>
    </View>
  );
}
