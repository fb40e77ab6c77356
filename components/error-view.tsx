import { StyleSheet, Text, View } from 'react-native';
import { KeelsonApiError } from '../shared/errors';
import { Button } from './button';
import { colors, fonts, radius, space, text } from './theme';

export interface ErrorViewProps {
  error: unknown;
  /** Heading above the message. */
  title?: string;
  onRetry?: () => void;
}

/** Shows a KeelsonApiError's message and its field issues (row/column for CSV findings). */
export function ErrorView({ error, title = 'Something went wrong', onRetry }: ErrorViewProps) {
  const message =
    error instanceof KeelsonApiError ? error.message : error instanceof Error ? error.message : 'An unexpected error occurred';
  const issues = error instanceof KeelsonApiError ? (error.issues ?? []) : [];
  return (
    <View style={styles.box} role="alert">
      <Text style={[text.strong, { color: colors.rust }]}>{title}</Text>
      <Text style={text.body}>{message}</Text>
      {issues.length ? (
        <View style={styles.issues}>
          {issues.slice(0, 20).map((i, k) => {
            const where = [i.path.length ? i.path.join('.') : '', i.row !== undefined ? `row ${i.row}` : '', i.column ? `column ${i.column}` : '']
              .filter(Boolean)
              .join(', ');
            return (
              <Text key={k} style={styles.issue}>
                {'\u2022 '}
                {where ? <Text style={{ fontFamily: fonts.textStrong }}>{where}: </Text> : null}
                {i.message}
              </Text>
            );
          })}
          {issues.length > 20 ? <Text style={text.muted}>…and {issues.length - 20} more</Text> : null}
        </View>
      ) : null}
      {onRetry ? <Button label="Try again" onPress={onRetry} compact /> : null}
    </View>
  );
}

const styles = StyleSheet.create({
  box: {
    borderLeftWidth: 4,
    borderLeftColor: colors.rust,
    backgroundColor: '#FBF1EE',
    borderRadius: radius.sm,
    padding: space.md,
    gap: space.xs,
  },
  issues: { gap: 2, marginTop: space.xs },
  issue: { fontFamily: fonts.text, fontSize: 14, color: colors.ink },
});
