/**
 * After a closing or a referral: the case is finished, and the next one in the queue view it
 * came from is one press away (issue 14; the view is found by queue-trail.ts).
 */
import { Link, useRouter } from 'expo-router';
import { useEffect, useState } from 'react';
import { View } from 'react-native';
import { CASE_STATE_LABELS, type CaseState } from '../../../shared/cases';
import { colours, radius, space } from '../../theme';
import { Button } from '../../ui/button';
import { Txt } from '../../ui/text';
import { findNextCase, type NextCase, type QueueTrail } from './queue-trail';

/** The finished case's notice and the way on: "Next case" or back to the queue. */
export function CaseNext({ caseId, state, trail, onShown }: { caseId: string; state: CaseState; trail: QueueTrail | null; onShown?(): void }) {
  const router = useRouter();
  const [found, setFound] = useState<NextCase | null>(null);
  const [error, setError] = useState<string | null>(null);
  // The closing form that was pressed may sit far below: bring this notice into view once.
  useEffect(() => {
    onShown?.();
    // eslint-disable-next-line react-hooks/exhaustive-deps -- once, when the notice appears
  }, []);
  useEffect(() => {
    let live = true;
    findNextCase(trail, caseId).then(
      (n) => live && setFound(n),
      (e: unknown) => live && setError(e instanceof Error ? e.message : 'The queue could not be read.'),
    );
    return () => {
      live = false;
    };
  }, [caseId, trail]);
  const queueHref = { pathname: '/queue' as const, params: Object.fromEntries(new URLSearchParams(found?.qs ?? '')) };
  const backToQueue = (
    <Link href={queueHref} testID="case-next-queue">
      <Txt variant="small" bold tone="brass">
        Back to the queue
      </Txt>
    </Link>
  );
  return (
    <View
      testID="case-next"
      accessibilityRole="summary"
      style={{ backgroundColor: colours.okSoft, borderRadius: radius.md, borderLeftWidth: 4, borderLeftColor: colours.ok, padding: space.md, gap: space.sm }}
    >
      <Txt bold accessibilityRole="alert" testID="case-next-done">
        The case is {CASE_STATE_LABELS[state].toLowerCase()}.
      </Txt>
      {!found && !error && (
        <Txt variant="small" tone="soft">
          Finding the next case in the queue…
        </Txt>
      )}
      {error && (
        <Txt variant="small" tone="alert">
          {error}
        </Txt>
      )}
      {found?.next && (
        <View style={{ gap: space.sm }}>
          <Txt variant="small" testID="case-next-which">
            Next in the queue:{' '}
            <Txt variant="small" bold figures>
              {found.next.returnRef}
            </Txt>
            {`, ${found.next.taxpayerName} (${CASE_STATE_LABELS[found.next.state].toLowerCase()})`}
          </Txt>
          <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center' }}>
            <Button
              label="Next case"
              testID="case-next-open"
              onPress={() => found.next && router.push({ pathname: '/cases/[id]', params: { id: found.next.id } })}
            />
            {backToQueue}
          </View>
        </View>
      )}
      {found && !found.next && (
        <View style={{ gap: space.xs }}>
          <Txt variant="small" testID="case-next-none">
            No other case is being worked in this view of the queue.
          </Txt>
          {backToQueue}
        </View>
      )}
    </View>
  );
}
