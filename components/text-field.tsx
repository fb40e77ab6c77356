import { forwardRef, useId } from 'react';
import { StyleSheet, Text, TextInput, View, type TextInputProps } from 'react-native';
import { useController, type Control, type FieldValues, type Path } from 'react-hook-form';
import { colors, fonts, radius, space, text } from './theme';

export interface TextFieldProps extends Omit<TextInputProps, 'style' | 'onChange'> {
  label: string;
  /** Error under the field (also marks it invalid for screen readers). */
  error?: string;
  /** Help under the field. */
  hint?: string;
  /** Monospaced, right-aligned input for numbers. */
  numeric?: boolean;
}

/** Labelled text input; the label is its accessible name (`getByLabel(label)` finds it). */
export const TextField = forwardRef<TextInput, TextFieldProps>(function TextField({ label, error, hint, numeric, ...input }, ref) {
  const id = useId();
  return (
    <View style={styles.wrap}>
      <Text style={text.label} nativeID={`${id}-label`}>
        {label}
      </Text>
      <TextInput
        ref={ref}
        aria-label={label}
        aria-invalid={error ? true : undefined}
        placeholderTextColor={colors.fog}
        {...input}
        style={[styles.input, numeric && styles.numeric, error ? styles.invalid : null]}
      />
      {error ? (
        <Text style={styles.error} role="alert">
          {error}
        </Text>
      ) : hint ? (
        <Text style={text.muted}>{hint}</Text>
      ) : null}
    </View>
  );
});

const styles = StyleSheet.create({
  wrap: { gap: space.xs, alignSelf: 'stretch' },
  input: {
    minHeight: 44,
    borderWidth: 1,
    borderColor: colors.rule,
    borderRadius: radius.sm,
    backgroundColor: colors.card,
    paddingHorizontal: space.md,
    fontFamily: fonts.text,
    fontSize: 16,
    color: colors.ink,
  },
  numeric: { fontFamily: fonts.mono, textAlign: 'right' },
  invalid: { borderColor: colors.rust, borderWidth: 2 },
  error: { fontFamily: fonts.text, fontSize: 13, color: colors.rust },
});

export interface FormTextFieldProps<F extends FieldValues> extends Omit<TextFieldProps, 'value' | 'onChangeText' | 'onBlur' | 'error'> {
  control: Control<F>;
  name: Path<F>;
}

/** A TextField bound to a react-hook-form field: value, change, blur and the field's error message. */
export function FormTextField<F extends FieldValues>({ control, name, ...props }: FormTextFieldProps<F>) {
  const { field, fieldState } = useController({ control, name });
  return (
    <TextField
      {...props}
      value={(field.value as string | undefined) ?? ''}
      onChangeText={field.onChange}
      onBlur={field.onBlur}
      ref={field.ref}
      error={fieldState.error?.message}
    />
  );
}
