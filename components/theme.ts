/** Keelson design tokens: the "harbour" palette, type faces, spacing (see shared/design.md). */
export const colors = {
  ink: '#10273A',
  slate: '#4A5E70',
  paper: '#F6F4EF',
  card: '#FFFFFF',
  rule: '#D9D4C7',
  brass: '#A8742A',
  kelp: '#2F7D5B',
  rust: '#B5533C',
  fog: '#8A97A3',
  /** Text on ink or brass. */
  onDark: '#FFFFFF',
  /** A quiet brass tint for selected rows and focus backgrounds. */
  brassTint: '#F3E8D6',
} as const;

/** Font family names as registered by `useKeelsonFonts` (one family name per weight). */
export const fonts = {
  text: 'Inter_400Regular',
  textStrong: 'Inter_600SemiBold',
  mono: 'IBMPlexMono_400Regular',
  monoStrong: 'IBMPlexMono_500Medium',
} as const;

export const space = { xs: 4, sm: 8, md: 12, lg: 16, xl: 24, xxl: 32 } as const;
export const radius = { sm: 4, md: 8, lg: 12 } as const;
export const fontSize = { small: 13, body: 15, title: 22, heading: 17 } as const;

/** Widest content column on wide screens. */
export const CONTENT_MAX = 1120;

export const text = {
  body: { fontFamily: fonts.text, fontSize: fontSize.body, color: colors.ink, lineHeight: 22 },
  strong: { fontFamily: fonts.textStrong, fontSize: fontSize.body, color: colors.ink, lineHeight: 22 },
  muted: { fontFamily: fonts.text, fontSize: fontSize.small, color: colors.slate, lineHeight: 18 },
  heading: { fontFamily: fonts.textStrong, fontSize: fontSize.heading, color: colors.ink, lineHeight: 24 },
  title: { fontFamily: fonts.textStrong, fontSize: fontSize.title, color: colors.ink, lineHeight: 28 },
  label: { fontFamily: fonts.textStrong, fontSize: fontSize.small, color: colors.slate, lineHeight: 18 },
  num: { fontFamily: fonts.mono, fontSize: fontSize.body, color: colors.ink, fontVariant: ['tabular-nums'] as ('tabular-nums')[] },
} as const;
