/**
 * The top of the case screen: who and what the case is about, its score band, and the
 * screening caution.
 */
import { Link } from 'expo-router';
import { Pressable, View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { CASE_SELECTION_LABELS } from '../../../shared/cases';
import { SCREENING_CAUTION } from '../../../shared/cautions';
import { colours, radius, space } from '../../theme';
import { Card } from '../../ui/card';
import { Txt } from '../../ui/text';
import { age, amount, StateBadge, when, whole } from './case-bits';
import { Fact } from './case-section';
import { DeadlineLabel } from './deadline-bits';
import { useRevealTin } from './use-cases';

/** Reference, state, taxpayer, the facts of the return and the assessment deadline. */
export function CaseHeader({ d }: { d: CaseDetail }) {
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

/** The score, the amount at stake and the priority, on the dark band under the header. */
export function CaseScoreSummary({ d }: { d: CaseDetail }) {
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

/** The short caution that a selection is screening and no finding. */
export function CaseCaution() {
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
