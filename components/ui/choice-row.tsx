import { Pressable, View } from 'react-native';
import { colours, radius, space } from '../theme';
import { Txt } from './text';

/** Props for {@link Chip}. */
export interface ChipProps {
  label: string;
  /** Chosen (a radio) or pressed in (a toggle button): drawn filled. Leave out for a plain button. */
  on?: boolean;
  /** A choice in a {@link ChoiceRow} ("radio", aria-checked) or a button of its own ("button", aria-pressed). */
  role?: 'radio' | 'button';
  onPress(): void;
  testID?: string;
}

/**
 * One rounded pill to tap: the look of every choice in {@link ChoiceRow}, kept here so a row
 * of plain buttons (the queue's saved views) looks the same without copying the style.
 */
export function Chip({ label, on, role = 'button', onPress, testID }: ChipProps) {
  // react-native-web renders aria-* props, not accessibilityState; a button given no `on` is a
  // plain button, not a toggle, so it carries no aria-pressed.
  const state = role === 'radio' ? { 'aria-checked': !!on } : { 'aria-pressed': on };
  return (
    <Pressable
      role={role}
      {...state}
      testID={testID}
      onPress={onPress}
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
        {label}
      </Txt>
    </Pressable>
  );
}

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
            <Chip key={o.value} label={o.label} on={on} role="radio" testID={testID ? `${testID}-${o.value}` : undefined} onPress={() => onChange(o.value)} />
          );
        })}
      </View>
    </View>
  );
}
