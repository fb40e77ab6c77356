import { useId } from 'react';
import { Platform, StyleSheet, Text, View } from 'react-native';
import { colors, fonts, radius, space, text } from './theme';

export interface LibraryFileInputProps {
  /** Accessible name and visible label of the file picker. */
  label?: string;
  disabled?: boolean;
  onPick: (file: File) => void;
}

/**
 * CSV file picker. On the web it is a real `<input type="file">` named by its label (so a
 * browser test can `setInputFiles` on `getByLabel(label)`); other platforms say to use the web app.
 */
export function LibraryFileInput({ label = 'CSV file', disabled, onPick }: LibraryFileInputProps) {
  const id = useId();
  if (Platform.OS !== 'web') {
    return <Text style={text.muted}>Uploading a CSV works in the web app; open Keelson in a browser to add a library.</Text>;
  }
  return (
    <View style={styles.wrap}>
      <label htmlFor={id} style={{ fontFamily: fonts.textStrong, fontSize: 13, color: colors.slate }}>
        {label}
      </label>
      <input
        id={id}
        type="file"
        accept=".csv,.txt,text/csv,text/plain"
        aria-label={label}
        disabled={disabled}
        onChange={(e) => {
          const f = e.currentTarget.files?.[0];
          if (f) onPick(f);
          e.currentTarget.value = '';
        }}
        style={{
          fontFamily: fonts.text,
          fontSize: 15,
          color: colors.ink,
          padding: space.md,
          border: `1px dashed ${colors.brass}`,
          borderRadius: radius.sm,
          background: colors.card,
          minHeight: 44,
          maxWidth: '100%',
        }}
      />
      <Text style={text.muted}>A date column (YYYY-MM, YYYYMM or YYYY-MM-DD) and one column per series; comma, semicolon or tab separated.</Text>
    </View>
  );
}

const styles = StyleSheet.create({ wrap: { gap: space.xs } });
