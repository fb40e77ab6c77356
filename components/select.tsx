import { Pressable, StyleSheet, Text, View } from 'react-native';
import { colors, fonts, radius, space, text } from './theme';

export interface SelectOption<V extends string> {
  value: V;
  label: string;
}

export interface SelectProps<V extends string> {
  label: string;
  value: V | undefined;
  options: readonly SelectOption<V>[];
  onChange: (value: V) => void;
  disabled?: boolean;
  error?: string;
  /** Hide the visible label (it stays the accessible name). */
  hideLabel?: boolean;
}

/** Option picker as a row of radio buttons: works the same on web and native; a radiogroup named `label`. */
export function Select<V extends string>({ label, value, options, onChange, disabled, error, hideLabel }: SelectProps<V>) {
  return (
    <View style={styles.wrap}>
      {hideLabel ? null : <Text style={text.label}>{label}</Text>}
      <View role="radiogroup" aria-label={label} style={styles.row}>
        {options.map((o) => {
          const on = o.value === value;
          return (
            <Pressable
              key={o.value}
              role="radio"
              aria-checked={on}
              aria-label={o.label}
              aria-disabled={disabled || undefined}
              disabled={disabled}
              onPress={() => onChange(o.value)}
              style={[styles.option, on && styles.on, disabled && { opacity: 0.5 }]}
            >
              <View style={[styles.dot, on && styles.dotOn]} />
              <Text style={[styles.optionText, on && { fontFamily: fonts.textStrong }]}>{o.label}</Text>
            </Pressable>
          );
        })}
      </View>
      {error ? <Text style={styles.error}>{error}</Text> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.xs },
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  option: {
    minHeight: 40,
    flexDirection: 'row',
    alignItems: 'center',
    gap: space.sm,
    paddingHorizontal: space.md,
    borderWidth: 1,
    borderColor: colors.rule,
    borderRadius: radius.sm,
    backgroundColor: colors.card,
  },
  on: { borderColor: colors.brass, backgroundColor: colors.brassTint },
  dot: { width: 12, height: 12, borderRadius: 6, borderWidth: 2, borderColor: colors.slate },
  dotOn: { borderColor: colors.brass, backgroundColor: colors.brass },
  optionText: { fontFamily: fonts.text, fontSize: 14, color: colors.ink },
  error: { fontFamily: fonts.text, fontSize: 13, color: colors.rust },
});
