/**
 * The assessment deadline on screen (issue 13): last day and days left, with a stronger
 * look inside 90 days and stronger still inside 30 (shared/returns/assessment-deadline.ts
 * deadlineUrgency). The case screen passes the server's days left (office clock); the queue
 * counts them from the viewer's date.
 */
import { View } from 'react-native';
import { daysUntil, deadlineUrgency } from '../../../shared/returns/assessment-deadline';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';

/** Today's date in the viewer's time zone (YYYY-MM-DD). */
function localToday(): string {
  const d = new Date();
  const p = (n: number) => String(n).padStart(2, '0');
  return `${d.getFullYear()}-${p(d.getMonth() + 1)}-${p(d.getDate())}`;
}

/** "812 days left", "1 day left", "last day", "3 days past". */
export function daysLeftText(days: number): string {
  if (days === 0) return 'last day';
  if (days < 0) return `${-days} day${days === -1 ? '' : 's'} past`;
  return `${days} day${days === 1 ? '' : 's'} left`;
}

const LOOK = {
  urgent: { bg: colours.alertSoft, fg: 'alert' as const },
  soon: { bg: colours.warnSoft, fg: 'warn' as const },
  normal: { bg: 'transparent', fg: 'soft' as const },
};

/** The deadline as a compact label: "Assess by 2028-04-30 · 812 days left". */
export function DeadlineLabel({ assessBy, daysLeft, testID }: { assessBy: string | null; daysLeft?: number | null; testID?: string }) {
  if (!assessBy) {
    return (
      <Txt variant="caption" tone="soft" testID={testID}>
        No assessment deadline
      </Txt>
    );
  }
  const days = daysLeft ?? daysUntil(localToday(), assessBy);
  const urgency = deadlineUrgency(days);
  const look = LOOK[urgency];
  return (
    <View
      style={{
        alignSelf: 'flex-start',
        backgroundColor: look.bg,
        borderRadius: radius.sm,
        paddingHorizontal: urgency === 'normal' ? 0 : space.xs,
        paddingVertical: urgency === 'normal' ? 0 : 1,
      }}
      testID={testID}
      accessibilityLabel={`Assessment deadline ${assessBy}, ${daysLeftText(days)}${urgency === 'urgent' ? ', under 30 days' : urgency === 'soon' ? ', under 90 days' : ''}`}
    >
      <Txt variant="caption" figures bold={urgency !== 'normal'} tone={look.fg}>
        assess by {assessBy} · {daysLeftText(days)}
      </Txt>
    </View>
  );
}
