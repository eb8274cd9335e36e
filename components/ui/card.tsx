import { View, type ViewProps } from 'react-native';
import { colours, radius, space } from '../theme';

/** A bordered surface for one group of facts. */
export function Card({ style, ...rest }: ViewProps) {
  return (
    <View
      {...rest}
      style={[
        {
          backgroundColor: colours.surface,
          borderColor: colours.line,
          borderWidth: 1,
          borderRadius: radius.md,
          padding: space.lg,
        },
        style,
      ]}
    />
  );
}
