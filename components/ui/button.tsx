import { ActivityIndicator, Pressable, type PressableProps } from 'react-native';
import { colours, radius, space } from '../theme';
import { Txt } from './text';

/** Props for {@link Button}. */
export interface ButtonProps extends Omit<PressableProps, 'children'> {
  label: string;
  kind?: 'primary' | 'secondary' | 'quiet' | 'danger';
  busy?: boolean;
}

const look = {
  primary: { bg: colours.ink, fg: 'white' as const, border: colours.ink },
  secondary: { bg: colours.surface, fg: 'ink' as const, border: colours.cord },
  quiet: { bg: 'transparent', fg: 'brass' as const, border: 'transparent' },
  danger: { bg: colours.surface, fg: 'alert' as const, border: colours.alert },
};

/** A button with a clear label; disabled and busy states are visible. */
export function Button({ label, kind = 'primary', busy, disabled, style, ...rest }: ButtonProps) {
  const l = look[kind];
  const off = disabled || busy;
  return (
    <Pressable
      role="button"
      // aria-* props, not accessibilityState: react-native-web renders only these to the DOM.
      aria-disabled={!!off}
      aria-busy={!!busy}
      disabled={off}
      {...rest}
      style={(state) => [
        {
          backgroundColor: l.bg,
          borderColor: l.border,
          borderWidth: 1.5,
          borderRadius: radius.md,
          paddingVertical: space.sm + 2,
          paddingHorizontal: space.lg,
          flexDirection: 'row',
          alignItems: 'center',
          justifyContent: 'center',
          gap: space.sm,
          opacity: off ? 0.55 : state.pressed ? 0.85 : 1,
        },
        typeof style === 'function' ? style(state) : style,
      ]}
    >
      {busy && <ActivityIndicator size="small" color={kind === 'primary' ? colours.white : colours.ink} />}
      <Txt bold tone={l.fg}>
        {label}
      </Txt>
    </Pressable>
  );
}
