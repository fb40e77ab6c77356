import { StyleSheet, Text, View } from 'react-native';
import { Button } from './button';
import { colors, fonts, radius, space, text } from './theme';

/** "about 2 min left" style estimate; null when unknown. */
export function formatTimeLeft(seconds: number | null | undefined): string | null {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds) || seconds < 0) return null;
  if (seconds < 60) return `about ${Math.max(1, Math.round(seconds))} s left`;
  if (seconds < 3600) return `about ${Math.round(seconds / 60)} min left`;
  return `about ${(seconds / 3600).toFixed(1)} h left`;
}

export interface ProgressBarProps {
  label: string;
  done: number;
  total: number;
  /** Estimated seconds left; omitted or null shows "estimating…". */
  secondsLeft?: number | null;
  onCancel?: () => void;
  cancelling?: boolean;
}

/** Progress of a long job: bar, done/total, time left and a cancel button. */
export function ProgressBar({ label, done, total, secondsLeft, onCancel, cancelling }: ProgressBarProps) {
  const frac = total > 0 ? Math.min(1, Math.max(0, done / total)) : 0;
  const left = formatTimeLeft(secondsLeft) ?? (done >= total && total > 0 ? 'done' : 'estimating time left…');
  return (
    <View style={styles.wrap}>
      <View style={styles.row}>
        <Text style={[text.strong, { flex: 1 }]}>{label}</Text>
        <Text style={styles.count}>
          {done} / {total}
        </Text>
      </View>
      <View
        style={styles.track}
        role="progressbar"
        aria-label={label}
        aria-valuemin={0}
        aria-valuemax={total}
        aria-valuenow={done}
      >
        <View style={[styles.fill, { width: `${frac * 100}%` }]} />
      </View>
      <View style={styles.row}>
        <Text style={[text.muted, { flex: 1 }]}>{left}</Text>
        {onCancel ? <Button label="Cancel" accessibilityLabel={`Cancel ${label}`} onPress={onCancel} busy={cancelling} variant="danger" compact /> : null}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  wrap: { gap: space.xs },
  row: { flexDirection: 'row', alignItems: 'center', gap: space.sm },
  count: { fontFamily: fonts.mono, fontSize: 14, color: colors.ink, fontVariant: ['tabular-nums'] },
  track: { height: 10, backgroundColor: colors.paper, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, overflow: 'hidden' },
  fill: { height: '100%', backgroundColor: colors.brass },
});
