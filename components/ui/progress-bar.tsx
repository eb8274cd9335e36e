import { View } from 'react-native';
import { colours, radius } from '../theme';

/** Props for {@link ProgressBar}. */
export interface ProgressBarProps {
  /** Share done, 0–1; null shows a track only (nothing known yet). */
  value: number | null;
  /** What the bar measures, read out by screen readers. */
  label: string;
  tone?: 'cord' | 'brass' | 'ok';
  testID?: string;
}

const fill = { cord: colours.cord, brass: colours.brass, ok: colours.ok };

/** A thin horizontal bar: the plumb cord filling its track. */
export function ProgressBar({ value, label, tone = 'cord', testID }: ProgressBarProps) {
  const share = value === null ? 0 : Math.max(0, Math.min(1, value));
  return (
    <View
      testID={testID}
      role="progressbar"
      aria-label={label}
      aria-valuemin={0}
      aria-valuemax={100}
      aria-valuenow={Math.round(share * 100)}
      style={{ height: 10, borderRadius: radius.sm, backgroundColor: colours.line, overflow: 'hidden' }}
    >
      <View style={{ width: `${share * 100}%`, height: '100%', backgroundColor: fill[tone], borderRadius: radius.sm }} />
    </View>
  );
}
