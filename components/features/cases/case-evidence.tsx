/**
 * The evidence on the case screen: why the return was selected (factors and leading digits)
 * and the return as filed.
 */
import { useState } from 'react';
import { Pressable, View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { LINE_CODE_DEFS } from '../../../shared/returns/line-codes';
import type { PoolSnapshot } from '../../../shared/scoring/breakdown';
import { colours, space } from '../../theme';
import { useIsWide } from '../../ui/layout';
import { Txt } from '../../ui/text';
import { amount, whole } from './case-bits';
import { Section } from './case-section';
import { DigitChart } from './digit-chart';

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

/** The factors that added points, largest first; the quiet ones fold away. */
export function CaseFactors({ d }: { d: CaseDetail }) {
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

/** The return's and the preparer's leading digits against the expected curve. */
export function CaseDigits({ d }: { d: CaseDetail }) {
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

/** The return as filed: its lines (folded when long) and the totals by the rules beside the reported ones. */
export function CaseLines({ d }: { d: CaseDetail }) {
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
