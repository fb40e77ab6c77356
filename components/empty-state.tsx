import type { ReactNode } from 'react';
import { StyleSheet, Text, View } from 'react-native';
import { colors, radius, space, text } from './theme';

export interface EmptyStateProps {
  title: string;
  body?: string;
  /** A button or link that gets the user out of the empty state. */
  action?: ReactNode;
}

/** Shown where a list has nothing yet: says why and what to do next. */
export function EmptyState({ title, body, action }: EmptyStateProps) {
  return (
    <View style={styles.box} role="status">
      <Text style={text.heading}>{title}</Text>
      {body ? <Text style={[text.body, { color: colors.slate }]}>{body}</Text> : null}
      {action}
    </View>
  );
}

const styles = StyleSheet.create({
  box: {
    borderWidth: 1,
    borderStyle: 'dashed',
    borderColor: colors.rule,
    borderRadius: radius.md,
    padding: space.xl,
    gap: space.sm,
    alignItems: 'flex-start',
  },
});
