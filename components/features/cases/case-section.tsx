/**
 * The frame every part of the case screen sits in: a card with a level-2 heading, and a
 * labelled fact for the header's row of facts.
 */
import type { ReactNode } from 'react';
import { View } from 'react-native';
import { space } from '../../theme';
import { Card } from '../../ui/card';
import { Txt } from '../../ui/text';

/** A titled card; `right` sits opposite the title (a count, a toggle). */
export function Section({ title, children, testID, right }: { title: string; children: ReactNode; testID?: string; right?: ReactNode }) {
  return (
    <Card style={{ gap: space.md }} testID={testID}>
      <View style={{ flexDirection: 'row', justifyContent: 'space-between', alignItems: 'baseline', gap: space.sm }}>
        <Txt variant="title" bold role="heading" aria-level={2}>
          {title}
        </Txt>
        {right}
      </View>
      {children}
    </Card>
  );
}

/** A small label over its value. */
export function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <View style={{ minWidth: 120, gap: 2 }}>
      <Txt variant="caption" tone="soft">
        {label}
      </Txt>
      {typeof children === 'string' ? <Txt>{children}</Txt> : children}
    </View>
  );
}
