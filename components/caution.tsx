import type { ReactNode } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { colors, fonts, radius, space } from './theme';

export const CAUTION_TEXT = 'Results are statistical evidence, not investment advice.';

/** The standing caution beside results; `children` adds a specific warning (e.g. small T for J). */
export function Caution({ children }: { children?: ReactNode }) {
  return (
    <View style={styles.box} role="note" aria-label="Caution">
      <Text style={styles.mark} aria-hidden>
        !
      </Text>
      <View style={{ flex: 1, gap: 2 }}>
        <Text style={styles.text}>{CAUTION_TEXT}</Text>
        {typeof children === 'string' ? <Text style={styles.text}>{children}</Text> : children}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  box: {
    flexDirection: 'row',
    gap: space.sm,
    borderWidth: 1,
    borderColor: colors.brass,
    backgroundColor: colors.brassTint,
    borderRadius: radius.sm,
    padding: space.sm,
    alignItems: 'flex-start',
  },
  mark: {
    width: 20,
    height: 20,
    borderRadius: 10,
    backgroundColor: colors.brass,
    color: colors.onDark,
    textAlign: 'center',
    fontFamily: fonts.textStrong,
    fontSize: 13,
    lineHeight: 20,
  },
  text: { fontFamily: fonts.text, fontSize: 13, lineHeight: 19, color: colors.ink },
});
