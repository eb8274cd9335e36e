import { forwardRef } from 'react';
import { TextInput, View, type TextInputProps } from 'react-native';
import { colours, fonts, radius, space, type } from '../theme';
import { Txt } from './text';

/** Props for {@link Field}. */
export interface FieldProps extends TextInputProps {
  label: string;
  error?: string;
  hint?: string;
}

/** A labelled text input with its error under it. */
export const Field = forwardRef<TextInput, FieldProps>(function Field({ label, error, hint, style, ...rest }, ref) {
  return (
    <View style={{ gap: space.xs }}>
      <Txt variant="small" bold>
        {label}
      </Txt>
      <TextInput
        ref={ref}
        accessibilityLabel={label}
        aria-invalid={error ? true : undefined}
        placeholderTextColor={colours.inkFaint}
        {...rest}
        style={[
          {
            fontFamily: fonts.body,
            ...type.body,
            color: colours.ink,
            backgroundColor: colours.white,
            borderWidth: 1.5,
            // The edge is what shows where to type: 3:1 against the page (WCAG 1.4.11).
            borderColor: error ? colours.alert : colours.control,
            borderRadius: radius.md,
            paddingHorizontal: space.md,
            paddingVertical: space.sm + 2,
          },
          style,
        ]}
      />
      {error ? (
        <Txt variant="small" tone="alert" accessibilityRole="alert">
          {error}
        </Txt>
      ) : hint ? (
        <Txt variant="caption" tone="faint">
          {hint}
        </Txt>
      ) : null}
    </View>
  );
});
