import { useState } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import type { OutboxMessage } from '../shared/auth';
import { useIsWide } from '../hooks/use-layout';
import { Card } from './card';
import { EmptyState } from './empty-state';
import { formatWhen } from './format';
import { colors, fonts, radius, space, text } from './theme';

function MailBody({ message }: { message: OutboxMessage }) {
  return (
    <View style={{ gap: space.sm }} aria-label={`Message: ${message.subject}`} role="article">
      <Text style={text.muted}>
        To {message.to} · {formatWhen(message.createdAt)}
      </Text>
      <Text style={styles.body} selectable>
        {message.text}
      </Text>
    </View>
  );
}

/**
 * Captured e-mails, newest first. Phone: each subject expands in place; wide: list beside the open message.
 */
export function MailList({ messages, emptyBody }: { messages: readonly OutboxMessage[]; emptyBody?: string }) {
  const wide = useIsWide();
  const sorted = [...messages].sort((a, b) => b.createdAt.localeCompare(a.createdAt) || b.id - a.id);
  const [openId, setOpenId] = useState<number | null>(wide ? (sorted[0]?.id ?? null) : null);
  if (sorted.length === 0) return <EmptyState title="No e-mail yet" body={emptyBody ?? 'Mail that Keelson sends shows up here.'} />;
  const open = sorted.find((m) => m.id === openId) ?? null;
  const list = (
    <View role="list" aria-label="Messages" style={styles.list}>
      {sorted.map((m) => {
        const isOpen = m.id === openId;
        return (
          <View role="listitem" key={m.id} style={[styles.item, isOpen && styles.itemOpen]}>
            <Pressable
              role="button"
              aria-expanded={isOpen}
              aria-label={`${m.subject}, to ${m.to}`}
              onPress={() => setOpenId(isOpen && !wide ? null : m.id)}
              style={styles.head}
            >
              <Text style={text.strong} numberOfLines={2}>
                {m.subject}
              </Text>
              {/* Open on a phone: the body below carries the "To … · time" line; show it once. */}
              {isOpen && !wide ? null : (
                <Text style={text.muted} numberOfLines={1}>
                  {m.to} · {formatWhen(m.createdAt)}
                </Text>
              )}
            </Pressable>
            {isOpen && !wide ? (
              <View style={styles.inline}>
                <MailBody message={m} />
              </View>
            ) : null}
          </View>
        );
      })}
    </View>
  );
  if (!wide) return list;
  return (
    <View style={{ flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' }}>
      <View style={{ width: 360 }}>{list}</View>
      <View style={{ flex: 1, minWidth: 0 }}>
        {open ? (
          <Card title={open.subject}>
            <MailBody message={open} />
          </Card>
        ) : (
          <Card title="Choose a message" />
        )}
      </View>
    </View>
  );
}

const styles = StyleSheet.create({
  list: { gap: space.xs },
  item: { backgroundColor: colors.card, borderWidth: 1, borderColor: colors.rule, borderRadius: radius.md, overflow: 'hidden' },
  itemOpen: { borderColor: colors.brass },
  head: { padding: space.md, gap: 2 },
  inline: { paddingHorizontal: space.md, paddingBottom: space.md },
  body: { fontFamily: fonts.mono, fontSize: 13, lineHeight: 20, color: colors.ink, flexShrink: 1 } as const,
});
