/**
 * Small pieces the queue, case and workload screens share: the state badge, the risk-score
 * meter, and how amounts, dates and ages are written.
 */
import { View } from 'react-native';
import { CASE_STATE_LABELS, type CaseState } from '../../../shared/cases';
import { centsFromNumeric } from '../../../shared/returns/money';
import { money, thousands } from '../../../shared/scoring/format';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';

/** "12,345.67" from a decimal string ("12345.67"); never through a float. */
export function amount(decimal: string | null): string {
  const c = centsFromNumeric(decimal);
  return c === null ? '—' : money(c);
}

/** A ranking figure (priority) as a whole number with thousands separators. */
export const whole = thousands;

/** "2025-03-04 14:05" in the viewer's time zone. */
export function when(iso: string): string {
  const d = new Date(iso);
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())} ${p(d.getHours())}:${p(d.getMinutes())}`;
}

/** "today", "1 day", "12 days" since the moment given. */
export function age(iso: string, now = Date.now()): string {
  const days = Math.floor((now - Date.parse(iso)) / 86_400_000);
  return days <= 0 ? 'today' : `${days} day${days === 1 ? '' : 's'}`;
}

/** Each state's badge colours (exported for the test that holds the Referred badge neutral). */
export const STATE_LOOK: Record<CaseState, { bg: string; fg: 'ink' | 'brass' | 'warn' | 'ok' | 'alert' | 'soft' }> = {
  open: { bg: colours.brassSoft, fg: 'ink' },
  assigned: { bg: '#E3ECEA', fg: 'ink' },
  in_review: { bg: '#D6E4E5', fg: 'ink' },
  awaiting_reply: { bg: colours.warnSoft, fg: 'warn' },
  // A referral hands the case to another unit; it is no finding, so it wears a neutral colour,
  // never the alert red.
  referred: { bg: colours.neutralSoft, fg: 'ink' },
  closed_no_change: { bg: colours.okSoft, fg: 'ok' },
  closed_adjusted: { bg: colours.okSoft, fg: 'ok' },
};

/** The case's state as a coloured label. */
export function StateBadge({ state, testID }: { state: CaseState; testID?: string }) {
  const look = STATE_LOOK[state];
  return (
    <View style={{ alignSelf: 'flex-start', backgroundColor: look.bg, borderRadius: radius.sm, paddingHorizontal: space.sm, paddingVertical: 2 }}>
      <Txt variant="small" bold tone={look.fg} testID={testID}>
        {CASE_STATE_LABELS[state]}
      </Txt>
    </View>
  );
}

/**
 * The risk score as a figure and a short brass bar (0–100), so a column of scores can be
 * read at a glance.
 */
export function ScoreMeter({ score, width = 64 }: { score: number; width?: number }) {
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }} accessibilityLabel={`Risk score ${score.toFixed(1)} of 100`}>
      <Txt figures bold style={{ minWidth: 38, textAlign: 'right' }}>
        {score.toFixed(1)}
      </Txt>
      <View style={{ width, height: 6, borderRadius: 3, backgroundColor: colours.line, overflow: 'hidden' }}>
        <View style={{ width: `${Math.max(0, Math.min(100, score))}%`, height: 6, backgroundColor: colours.brass }} />
      </View>
    </View>
  );
}
