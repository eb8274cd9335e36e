import { Link, useLocalSearchParams } from 'expo-router';
import { useQueryClient } from '@tanstack/react-query';
import { useMemo, useState, type ReactNode } from 'react';
import { View } from 'react-native';
import { space } from '../../theme';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { CaseAnalyses } from '../analyses/case-analyses';
import { LettersPanel } from '../letters/letters-panel';
import { isFinalState, type CaseState } from '../../../shared/cases';
import { CaseActionBar, jumpTo, type CasePart } from './case-action-bar';
import { CaseActions, type ClosingMove } from './case-actions';
import { CaseDigits, CaseFactors, CaseLines } from './case-evidence';
import { CaseCaution, CaseHeader, CaseScoreSummary } from './case-header';
import { CaseHistory } from './case-history';
import { CaseNext } from './case-next';
import { CaseNotes } from './case-notes';
import { CaseRelated } from './case-related';
import { ReplyFlagBanner } from './reply-flag-banner';
import { findTrail } from './queue-trail';
import { useCase } from './use-cases';

/** A part of the screen the phone's action bar can jump to. */
function Part({ name, children }: { name: CasePart; children: ReactNode }) {
  return (
    <View nativeID={`case-part-${name}`} style={{ gap: space.lg }}>
      {children}
    </View>
  );
}

/**
 * One case: why it scored, the return, the work on it, and what the caller may do next. On a
 * phone the actions allowed now ride in a bar at the top (case-action-bar.tsx) and the letters
 * follow the actions, before the evidence; after a closing or a referral made here the screen
 * offers the next case of the queue view it came from (case-next.tsx).
 */
export function CaseScreen() {
  const { id } = useLocalSearchParams<{ id: string }>();
  const caseId = Array.isArray(id) ? id[0] : (id ?? '');
  const c = useCase(caseId);
  const wide = useIsWide();
  const qc = useQueryClient();
  const trail = useMemo(() => findTrail(qc, caseId), [qc, caseId]);
  const [notice, setNotice] = useState<string | null>(null);
  const [closing, setClosing] = useState<ClosingMove | null>(null);
  const [reopening, setReopening] = useState(false);
  // The case that was finished while this screen showed it (by a closing here, or a referral
  // from the letters panel): it gets "Next case".
  const [finishedHere, setFinishedHere] = useState<string | null>(null);
  const [seen, setSeen] = useState<{ id: string; state: CaseState } | null>(null);
  const state = c.data?.state;
  if (state && (!seen || seen.id !== caseId || seen.state !== state)) {
    // Adjusted while rendering (React's pattern for state that follows a prop), not in an effect.
    if (seen && seen.id === caseId && !isFinalState(seen.state) && isFinalState(state)) setFinishedHere(caseId);
    else if (!isFinalState(state) && finishedHere === caseId) setFinishedHere(null);
    setSeen({ id: caseId, state });
  }
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
  const next =
    finishedHere === d.id && isFinalState(d.state) ? (
      <CaseNext caseId={d.id} state={d.state} trail={trail} onShown={() => requestAnimationFrame(() => jumpTo('actions'))} />
    ) : null;
  const actions = (
    <Part name="actions">
      {next}
      <CaseCaution />
      {notice && !next && (
        <Txt tone="ok" accessibilityRole="alert" testID="case-notice">
          {notice}
        </Txt>
      )}
      <CaseActions d={d} onChanged={setNotice} closing={closing} onClosing={setClosing} reopening={reopening} onReopening={setReopening} />
    </Part>
  );
  const letters = (
    <Part name="letters">
      {/* LettersPanel: mounted by the letters feature (components/features/letters/letters-panel.tsx) */}
      <LettersPanel caseId={d.id} state={d.state} canAct={d.actions.canAct} />
      <CaseAnalyses caseId={d.id} canAct={d.actions.canAct} />
    </Part>
  );
  const why = (
    <Part name="why">
      <CaseFactors d={d} />
      <CaseDigits d={d} />
    </Part>
  );
  const related = (
    <Part name="related">
      <CaseRelated d={d} />
    </Part>
  );
  const notes = (
    <Part name="notes">
      <CaseNotes d={d} />
    </Part>
  );
  const history = (
    <Part name="history">
      <CaseHistory d={d} />
    </Part>
  );
  if (wide) {
    return (
      <View style={{ gap: space.lg }} testID="case-screen">
        {/* First in both layouts, so a change of width keeps what it remembers. */}
        <ReplyFlagBanner d={d} />
        <CaseHeader d={d} />
        <CaseScoreSummary d={d} />
        <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
          <View style={{ flex: 3, gap: space.lg, minWidth: 0 }}>
            {why}
            <CaseLines d={d} />
            {related}
          </View>
          <View style={{ flex: 2, gap: space.lg, minWidth: 0 }}>
            {actions}
            {letters}
            {notes}
            {history}
          </View>
        </View>
      </View>
    );
  }
  return (
    <View style={{ gap: space.lg }} testID="case-screen">
      {/* First in both layouts, so a change of width keeps what it remembers. */}
      <ReplyFlagBanner d={d} />
      <CaseHeader d={d} />
      <CaseActionBar d={d} onChanged={setNotice} onClosing={setClosing} onReopen={() => setReopening(true)} />
      {actions}
      {letters}
      <CaseScoreSummary d={d} />
      {why}
      <CaseLines d={d} />
      {related}
      {notes}
      {history}
    </View>
  );
}
