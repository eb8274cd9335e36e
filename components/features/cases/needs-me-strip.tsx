import { Pressable, View } from 'react-native';
import { NEEDS_KINDS, NEEDS_LABELS, type NeedsKind, type NeedsMe } from '../../../shared/case-api';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';

/** Props for {@link NeedsMeStrip}. */
export interface NeedsMeStripProps {
  counts: NeedsMe | undefined;
  /** The reason the queue is filtered by now, if any. */
  active: NeedsKind | undefined;
  /** Shows only the cases needing this (or, for the active one, all of mine again). */
  onChoose(kind: NeedsKind | undefined): void;
  wide: boolean;
}

/**
 * "Needs me" (issue 14): four counts of the examiner's own cases, each a tap that narrows the
 * queue to those cases. A count above zero stands out; a reply received, the thing most
 * easily missed, in the alert colour.
 */
export function NeedsMeStrip({ counts, active, onChoose, wide }: NeedsMeStripProps) {
  return (
    <View style={{ gap: space.xs }} testID="needs-me">
      <Txt variant="small" bold accessibilityRole="header">
        Needs me
      </Txt>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        {NEEDS_KINDS.map((k) => {
          const n = counts?.[k];
          const on = active === k;
          const hot = (n ?? 0) > 0;
          const edge = on ? colours.ink : hot ? (k === 'reply' ? colours.alert : colours.brass) : colours.line;
          return (
            <Pressable
              key={k}
              role="button"
              aria-pressed={on}
              testID={`needs-${k}`}
              onPress={() => onChoose(on ? undefined : k)}
              style={{
                // Two to a row on a phone, four on a wide screen.
                flexBasis: wide ? 0 : '46%',
                flexGrow: 1,
                minWidth: wide ? 150 : 0,
                borderWidth: on ? 2 : 1,
                borderLeftWidth: 4,
                borderColor: edge,
                borderRadius: radius.md,
                backgroundColor: on ? colours.brassSoft : hot && k === 'reply' ? colours.alertSoft : colours.surface,
                paddingVertical: space.sm,
                paddingHorizontal: space.md,
                gap: 2,
              }}
            >
              <Txt variant="title" bold figures testID={`needs-${k}-count`} tone={hot && k === 'reply' ? 'alert' : 'ink'}>
                {n === undefined ? '…' : String(n)}
              </Txt>
              <Txt variant="small" tone={hot ? 'ink' : 'soft'}>
                {NEEDS_LABELS[k]}
              </Txt>
            </Pressable>
          );
        })}
      </View>
    </View>
  );
}
