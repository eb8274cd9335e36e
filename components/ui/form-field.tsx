import { Controller, type Control, type FieldPath, type FieldValues } from 'react-hook-form';
import { Field, type FieldProps } from './field';

/** Props for {@link FormField}: a {@link Field} plus the react-hook-form control and field name. */
export interface FormFieldProps<T extends FieldValues> extends Omit<FieldProps, 'value' | 'onChangeText' | 'onBlur' | 'error'> {
  control: Control<T>;
  name: FieldPath<T>;
  /** Turns the typed text into the form value (e.g. a number); the text itself by default. */
  toValue?: (text: string) => unknown;
}

/**
 * A labelled text input bound to a react-hook-form field: value, change, blur and the
 * schema's error message wired once here instead of in every form.
 */
export function FormField<T extends FieldValues>({ control, name, toValue, ...rest }: FormFieldProps<T>) {
  return (
    <Controller
      control={control}
      name={name}
      render={({ field, fieldState }) => (
        <Field
          {...rest}
          value={field.value === undefined || field.value === null ? '' : String(field.value)}
          onChangeText={(t) => field.onChange(toValue ? toValue(t) : t)}
          onBlur={field.onBlur}
          error={fieldState.error?.message}
        />
      )}
    />
  );
}
