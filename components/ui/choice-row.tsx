import { Pressable, View } from 'react-native';
import { colours, radius, space } from '../theme';
import { Txt } from './text';

/** Props for {@link ChoiceRow}. */
export interface ChoiceRowProps<T extends string> {
  label?: string;
  options: readonly { value: T; label: string }[];
  value: T | undefined;
  onChange(v: T): void;
  testID?: string;
}

/**
 * A row of mutually exclusive choices (a segmented picker that works on web and phone): a
 * radio group named by its label, each choice a radio with aria-checked (react-native-web
 * renders aria-* props, not accessibilityState), reachable with Tab and chosen with Enter
 * or Space.
 */
export function ChoiceRow<T extends string>({ label, options, value, onChange, testID }: ChoiceRowProps<T>) {
  return (
    <View style={{ gap: space.xs }} testID={testID}>
      {label && (
        <Txt variant="small" bold>
          {label}
        </Txt>
      )}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs }} role="radiogroup" aria-label={label}>
        {options.map((o) => {
          const on = o.value === value;
          return (
            <Pressable
              key={o.value}
              role="radio"
              aria-checked={on}
              testID={testID ? `${testID}-${o.value}` : undefined}
              onPress={() => onChange(o.value)}
              style={{
                paddingHorizontal: space.md,
                paddingVertical: space.xs + 2,
                borderRadius: radius.lg,
                borderWidth: 1.5,
                borderColor: on ? colours.ink : colours.control,
                backgroundColor: on ? colours.ink : colours.surface,
              }}
            >
              <Txt variant="small" bold={on} tone={on ? 'white' : 'ink'}>
                {o.label}
              </Txt>
            </Pressable>
          );
        })}
      </View>
    </View>
  );
}
