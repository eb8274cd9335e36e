import { View } from 'react-native';
import type { BatchState, BatchSummary } from '../../../shared/returns/batch-rows';
import { colours, radius, space } from '../../theme';
import { ProgressBar } from '../../ui/progress-bar';
import { Txt } from '../../ui/text';

/** Words for each batch state, as the clerk reads them. */
export const STATE_WORDS: Record<BatchState, string> = {
  received: 'Received',
  validating: 'Checking',
  rejected: 'Rejected',
  queued: 'Waiting for scoring',
  scoring: 'Scoring',
  scored: 'Scored',
};

const STATE_LOOK: Record<BatchState, { bg: string; tone: 'ink' | 'ok' | 'warn' | 'alert' | 'soft' }> = {
  received: { bg: colours.line, tone: 'soft' },
  validating: { bg: colours.brassSoft, tone: 'warn' },
  rejected: { bg: colours.alertSoft, tone: 'alert' },
  queued: { bg: colours.brassSoft, tone: 'ink' },
  scoring: { bg: colours.brassSoft, tone: 'ink' },
  scored: { bg: colours.okSoft, tone: 'ok' },
};

/** A batch's state as a small label. */
export function StateChip({ state, testID }: { state: BatchState; testID?: string }) {
  const l = STATE_LOOK[state];
  return (
    <View style={{ alignSelf: 'flex-start', backgroundColor: l.bg, borderRadius: radius.sm, paddingHorizontal: space.sm, paddingVertical: 2 }}>
      <Txt variant="small" bold tone={l.tone} testID={testID}>
        {STATE_WORDS[state]}
      </Txt>
    </View>
  );
}

/** 12,345 */
export function num(n: number): string {
  return n.toLocaleString('en-GB');
}

/** "1 Dec 2026, 21:52" in the viewer's time zone. */
export function when(iso: string): string {
  return new Date(iso).toLocaleString('en-GB', { day: 'numeric', month: 'short', year: 'numeric', hour: '2-digit', minute: '2-digit' });
}

/** The scoring progress of an accepted batch: a bar and "n of N returns scored". */
export function ScoringProgress({ batch, testID }: { batch: Pick<BatchSummary, 'state' | 'progress'>; testID?: string }) {
  const { scored, total } = batch.progress;
  const share = total > 0 ? scored / total : 0;
  const done = batch.state === 'scored';
  return (
    <View style={{ gap: space.xs }} testID={testID}>
      <ProgressBar value={done ? 1 : share} label="Returns scored" tone={done ? 'ok' : 'cord'} />
      <Txt variant="caption" figures tone="soft">
        {done
          ? `all ${num(total)} returns scored`
          : batch.state === 'queued'
            ? `waiting for the scoring worker · 0 of ${num(total)}`
            : `${num(scored)} of ${num(total)} returns scored`}
      </Txt>
    </View>
  );
}
