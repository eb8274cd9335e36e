/**
 * The case's action bar on a phone (issue 14): it stays at the top of the screen while the
 * case scrolls under it, and holds the actions allowed now, so nobody scrolls screens down
 * to find what they can do. A button that needs more (a closing's outcome, a letter, a
 * reopen's reason) opens that form where it lives and scrolls to it; claiming and plain
 * moves act at once, as their buttons in Actions do.
 */
import type { ReactNode } from 'react';
import { Platform, Pressable, View, type ViewStyle } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { CASE_STATE_LABELS, isFinalState } from '../../../shared/cases';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';
import { isClosing, type ClosingMove } from './case-actions';
import { useClaim, useTransition } from './use-cases';

/** The parts of the case screen the bar jumps to (their nativeID is `case-part-<name>`). */
export type CasePart = 'actions' | 'letters' | 'why' | 'related' | 'notes' | 'history';

/** Height kept clear above a part the bar scrolls to, so the bar does not cover its title. */
const BAR_CLEARANCE = 72;

/** Scrolls the app's main region so the part's top sits just under the bar (web). */
export function jumpTo(part: CasePart): void {
  if (Platform.OS !== 'web' || typeof document === 'undefined') return;
  const el = document.getElementById(`case-part-${part}`);
  const main = el?.closest('main');
  if (!el || !main) return;
  main.scrollTop += el.getBoundingClientRect().top - main.getBoundingClientRect().top - BAR_CLEARANCE;
}

// position: sticky exists on the web only; react-native's style type does not name it.
const sticky = (Platform.OS === 'web' ? { position: 'sticky', top: 0, zIndex: 10 } : {}) as unknown as ViewStyle;

function Chip({ label, onPress, testID, strong }: { label: string; onPress(): void; testID: string; strong?: boolean }) {
  return (
    <Pressable
      role="button"
      onPress={onPress}
      testID={testID}
      style={{
        borderRadius: radius.md,
        borderWidth: 1.5,
        borderColor: strong ? colours.ink : colours.cord,
        backgroundColor: strong ? colours.ink : colours.surface,
        paddingVertical: space.sm,
        paddingHorizontal: space.md,
      }}
    >
      <Txt variant="small" bold tone={strong ? 'white' : 'ink'}>
        {label}
      </Txt>
    </Pressable>
  );
}

/** The sticky bar; `onClosing` and `onReopen` open those forms in Actions. */
export function CaseActionBar({
  d,
  onChanged,
  onClosing,
  onReopen,
}: {
  d: CaseDetail;
  onChanged(message: string): void;
  onClosing(to: ClosingMove): void;
  onReopen(): void;
}) {
  const claim = useClaim(d.id);
  const move = useTransition(d.id);
  const a = d.actions;
  const letters = (d.state === 'in_review' || d.state === 'awaiting_reply') && a.canAct;
  const chips: ReactNode[] = [];
  if (a.claim)
    chips.push(
      <Chip
        key="claim"
        strong
        label="Claim"
        testID="bar-claim"
        onPress={() => claim.mutate(undefined, { onSuccess: () => onChanged('The case is yours now.') })}
      />,
    );
  for (const t of a.transitions) {
    if (isClosing(t.to)) {
      const to = t.to;
      chips.push(
        <Chip
          key={t.to}
          label={`${t.label}…`}
          testID={`bar-move-${t.to}`}
          onPress={() => {
            onClosing(to);
            // The form mounts on this press; scroll once it has been laid out.
            requestAnimationFrame(() => jumpTo('actions'));
          }}
        />,
      );
    } else {
      chips.push(
        <Chip
          key={t.to}
          strong={t.to === 'in_review'}
          label={t.label}
          testID={`bar-move-${t.to}`}
          onPress={() => move.mutate({ to: t.to }, { onSuccess: () => onChanged(`The case is now ${CASE_STATE_LABELS[t.to].toLowerCase()}.`) })}
        />,
      );
    }
  }
  if (letters) chips.push(<Chip key="letters" label="Request or refer" testID="bar-letters" onPress={() => jumpTo('letters')} />);
  if (a.reopen) chips.push(<Chip key="reopen" label="Reopen…" testID="bar-reopen" onPress={onReopen} />);
  const error = claim.error ?? move.error;
  return (
    <View
      role="region"
      aria-label="Case actions"
      testID="case-action-bar"
      style={[sticky, { backgroundColor: colours.paper, paddingVertical: space.sm, borderBottomWidth: 1, borderBottomColor: colours.line, gap: space.xs }]}
    >
      {/* The chips wrap rather than scroll sideways, so none hides off the edge of a phone. */}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'center' }}>
        {chips.length === 0 && (
          <Txt variant="small" tone="soft" testID="bar-nothing">
            {isFinalState(d.state) ? `${CASE_STATE_LABELS[d.state]}: nothing more to do here.` : 'You can read this case.'}
          </Txt>
        )}
        {chips}
      </View>
      <View style={{ flexDirection: 'row', gap: space.md, flexWrap: 'wrap' }}>
        {(
          [
            ['actions', 'Actions'],
            ['letters', 'Letters'],
            ['why', 'Why selected'],
            ['related', 'Related'],
            ['notes', 'Notes'],
            ['history', 'History'],
          ] as const
        ).map(([part, label]) => (
          <Pressable key={part} role="link" onPress={() => jumpTo(part)} testID={`jump-${part}`} hitSlop={6}>
            <Txt variant="caption" bold tone="brass">
              {label}
            </Txt>
          </Pressable>
        ))}
      </View>
      {error && (
        <Txt variant="small" tone="alert" accessibilityRole="alert">
          {error.message}
        </Txt>
      )}
    </View>
  );
}
