import { Fragment, type ReactNode } from 'react';
import { ScrollView, StyleSheet, Text, View } from 'react-native';
import { lexer, type Token, type Tokens } from 'marked';
import { colors, fonts, radius, space, text } from './theme';

/** marked keeps a few characters as HTML entities in its tokens; the screen wants the characters. */
function decode(s: string): string {
  return s
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&amp;/g, '&');
}

/** Running text: a line break inside a markdown paragraph is a space, as in any markdown reader. */
const flow = (s: string) => decode(s).replace(/\s*\n\s*/g, ' ');

/** Inline tokens (text, `code`, **strong**, *em*, links) as nested Text. */
function inline(tokens: readonly Token[] | undefined, key = 'i'): ReactNode {
  if (!tokens) return null;
  return tokens.map((t, i) => {
    const k = `${key}.${i}`;
    switch (t.type) {
      case 'codespan':
        return (
          <Text key={k} style={styles.codespan}>
            {flow((t as Tokens.Codespan).text)}
          </Text>
        );
      case 'strong':
        return (
          <Text key={k} style={styles.strong}>
            {inline((t as Tokens.Strong).tokens, k)}
          </Text>
        );
      case 'em':
        return (
          <Text key={k} style={styles.em}>
            {inline((t as Tokens.Em).tokens, k)}
          </Text>
        );
      case 'br':
        return <Text key={k}>{'\n'}</Text>;
      default: {
        const g = t as Tokens.Generic;
        return g.tokens && g.tokens.length > 0 ? <Fragment key={k}>{inline(g.tokens, k)}</Fragment> : <Fragment key={k}>{flow(String(g.text ?? g.raw ?? ''))}</Fragment>;
      }
    }
  });
}

function Block({ token, k }: { token: Token; k: string }) {
  switch (token.type) {
    case 'heading': {
      const h = token as Tokens.Heading;
      return (
        <Text style={h.depth === 1 ? styles.h1 : h.depth === 2 ? styles.h2 : styles.h3} role="heading" aria-level={Math.min(6, h.depth + 1)}>
          {inline(h.tokens, k)}
        </Text>
      );
    }
    case 'paragraph':
      return <Text style={styles.p}>{inline((token as Tokens.Paragraph).tokens, k)}</Text>;
    case 'code':
      return (
        <ScrollView horizontal style={styles.codeBox} contentContainerStyle={styles.codeInner}>
          <Text style={styles.code} accessibilityLabel="Formula">
            {(token as Tokens.Code).text}
          </Text>
        </ScrollView>
      );
    case 'list': {
      const l = token as Tokens.List;
      return (
        <View style={styles.list}>
          {l.items.map((item, i) => (
            <View key={`${k}.${i}`} style={styles.item}>
              <Text style={styles.bullet}>{l.ordered ? `${(Number(l.start) || 1) + i}.` : '•'}</Text>
              <View style={styles.itemBody}>
                {item.tokens.map((c, j) =>
                  c.type === 'text' ? (
                    <Text key={j} style={styles.p}>
                      {inline((c as Tokens.Text).tokens ?? [c], `${k}.${i}.${j}`)}
                    </Text>
                  ) : (
                    <Block key={j} token={c} k={`${k}.${i}.${j}`} />
                  ),
                )}
              </View>
            </View>
          ))}
        </View>
      );
    }
    case 'table': {
      const tb = token as Tokens.Table;
      const row = (cells: Tokens.TableCell[], head: boolean, rk: string) => (
        <View key={rk} style={[styles.tr, head && styles.trHead]} role="row">
          {cells.map((c, i) => (
            <Text key={i} style={[styles.td, head && styles.th]} role={head ? 'columnheader' : 'cell'}>
              {inline(c.tokens, `${rk}.${i}`)}
            </Text>
          ))}
        </View>
      );
      return (
        <ScrollView horizontal contentContainerStyle={{ flexGrow: 1 }}>
          <View style={styles.table} role="table">
            {row(tb.header, true, `${k}.h`)}
            {tb.rows.map((r, i) => row(r, false, `${k}.${i}`))}
          </View>
        </ScrollView>
      );
    }
    case 'blockquote':
      return (
        <View style={styles.quote}>
          {(token as Tokens.Blockquote).tokens.map((c, i) => (
            <Block key={i} token={c} k={`${k}.${i}`} />
          ))}
        </View>
      );
    case 'hr':
      return <View style={styles.hr} />;
    case 'space':
      return null;
    default:
      return <Text style={styles.p}>{decode((token as Tokens.Generic).raw ?? '')}</Text>;
  }
}

/**
 * A markdown document (the methods page) rendered readably: headings, paragraphs, lists, tables,
 * and formulas (code blocks and inline code) in the monospace face. The first heading is left
 * out when the screen already shows it as its title.
 */
export function MethodsDoc({ markdown, skipTitle = true }: { markdown: string; skipTitle?: boolean }) {
  const tokens = lexer(markdown);
  const first = tokens.findIndex((t) => t.type !== 'space');
  const shown = skipTitle && tokens[first]?.type === 'heading' && (tokens[first] as Tokens.Heading).depth === 1 ? tokens.filter((_, i) => i !== first) : tokens;
  return (
    <View style={styles.doc}>
      {shown.map((t, i) => (
        <Block key={i} token={t} k={String(i)} />
      ))}
    </View>
  );
}

/** The document's first level-1 heading, for the screen title. */
export function docTitle(markdown: string): string | null {
  const h = lexer(markdown).find((t) => t.type === 'heading' && (t as Tokens.Heading).depth === 1) as Tokens.Heading | undefined;
  return h ? h.text : null;
}

const styles = StyleSheet.create({
  doc: { gap: space.md, maxWidth: 760 },
  h1: { ...text.title },
  h2: { ...text.heading, fontSize: 19, marginTop: space.lg, paddingBottom: space.xs, borderBottomWidth: 1, borderBottomColor: colors.rule },
  h3: { ...text.heading, marginTop: space.md },
  p: { ...text.body },
  strong: { fontFamily: fonts.textStrong },
  em: { fontStyle: 'italic' },
  codespan: { fontFamily: fonts.mono, fontSize: 14, color: colors.ink, backgroundColor: colors.brassTint },
  codeBox: { backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md },
  codeInner: { padding: space.md },
  code: { fontFamily: fonts.mono, fontSize: 14, lineHeight: 21, color: colors.ink },
  list: { gap: space.xs },
  item: { flexDirection: 'row', gap: space.sm },
  bullet: { ...text.body, width: 20, textAlign: 'right', color: colors.slate },
  itemBody: { flex: 1, gap: space.xs },
  table: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, backgroundColor: colors.card, minWidth: '100%' },
  tr: { flexDirection: 'row', borderTopWidth: 1, borderTopColor: colors.rule },
  trHead: { borderTopWidth: 0, backgroundColor: colors.paper },
  td: { ...text.body, flex: 1, minWidth: 120, paddingVertical: space.xs, paddingHorizontal: space.sm },
  th: { fontFamily: fonts.textStrong },
  quote: { borderLeftWidth: 3, borderLeftColor: colors.brass, paddingLeft: space.md, gap: space.sm },
  hr: { height: 1, backgroundColor: colors.rule },
});
