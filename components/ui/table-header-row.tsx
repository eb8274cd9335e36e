import type { ReactNode } from 'react';
import { View } from 'react-native';
import { colours, space } from '../theme';
import { Txt } from './text';

/**
 * The heading row of a wide-screen table: the same padding and gap as its body rows, closed
 * by a heavier ink rule so the headings read as a header and not as one more row.
 */
export function TableHeaderRow({ children }: { children: ReactNode }) {
  return (
    <View
      style={{
        flexDirection: 'row',
        gap: space.md,
        paddingVertical: space.sm,
        paddingHorizontal: space.md,
        borderBottomWidth: 1.5,
        borderBottomColor: colours.ink,
      }}
    >
      {children}
    </View>
  );
}

/** One column heading inside a {@link TableHeaderRow}: small capitals in the soft tone. */
export function HeaderLabel({ children, right }: { children: string; right?: boolean }) {
  return (
    <Txt variant="caption" bold tone="soft" style={right ? { textAlign: 'right' } : undefined}>
      {children.toUpperCase()}
    </Txt>
  );
}

/**
 * A header row of plain columns: each heading in a cell of its fixed width, or taking the
 * rest of the row when the width is 0.
 */
export function TableHeader({ columns }: { columns: readonly (readonly [label: string, width: number])[] }) {
  return (
    <TableHeaderRow>
      {columns.map(([h, w]) => (
        <View key={h} style={w ? { width: w } : { flex: 1 }}>
          <HeaderLabel>{h}</HeaderLabel>
        </View>
      ))}
    </TableHeaderRow>
  );
}
