import { Link, useLocalSearchParams } from 'expo-router';
import { useState } from 'react';
import { View } from 'react-native';
import { space } from '../../theme';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { LettersPanel } from '../letters/letters-panel';
import { CaseActions } from './case-actions';
import { CaseDigits, CaseFactors, CaseLines } from './case-evidence';
import { CaseCaution, CaseHeader, CaseScoreSummary } from './case-header';
import { CaseHistory } from './case-history';
import { CaseNotes } from './case-notes';
import { useCase } from './use-cases';

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
      <CaseCaution />
      {notice && (
        <Txt tone="ok" accessibilityRole="alert" testID="case-notice">
          {notice}
        </Txt>
      )}
      <CaseActions d={d} onChanged={setNotice} />
    </>
  );
  const why = (
    <>
      <CaseFactors d={d} />
      <CaseDigits d={d} />
    </>
  );
  const record = (
    <>
      {/* LettersPanel: mounted by the letters feature (components/features/letters/letters-panel.tsx) */}
      <LettersPanel caseId={d.id} state={d.state} canAct={d.actions.canAct} />
      <CaseNotes d={d} />
      <CaseHistory d={d} />
    </>
  );
  return (
    <View style={{ gap: space.lg }} testID="case-screen">
      <CaseHeader d={d} />
      <CaseScoreSummary d={d} />
      {wide ? (
        <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
          <View style={{ flex: 3, gap: space.lg, minWidth: 0 }}>
            {why}
            <CaseLines d={d} />
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
          <CaseLines d={d} />
          {record}
        </View>
      )}
    </View>
  );
}
