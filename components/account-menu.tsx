import { useState } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import { useRouter } from 'expo-router';
import type { User } from '../shared/auth';
import { ROLE_LABELS } from '../shared/roles';
import { useForgetSession, useLogout } from '../hooks/use-session';
import { Button } from './button';
import { colors, fonts, radius, space, text } from './theme';

export function initials(name: string): string {
  const parts = name.trim().split(/\s+/).filter(Boolean);
  return ((parts[0]?.[0] ?? '') + (parts.length > 1 ? (parts[parts.length - 1]?.[0] ?? '') : '')).toUpperCase() || '?';
}

/** Sign-out: server session ended, to the sign-in screen (no "next"), then the query cache cleared. */
export function useSignOut() {
  const logout = useLogout();
  const forget = useForgetSession();
  const router = useRouter();
  return {
    signOut: () =>
      logout.mutate(undefined, {
        onSettled: () => {
          router.replace('/sign-in');
          forget();
        },
      }),
    pending: logout.isPending,
  };
}

export interface AccountMenuProps {
  user: User;
  /** 'bar' = compact initials button for the phone app bar; 'rail' = full-width row at the rail's foot. */
  placement: 'bar' | 'rail';
}

/** Account button: opens a small panel with name, e-mail, role, the account page and sign out. */
export function AccountMenu({ user, placement }: AccountMenuProps) {
  const [open, setOpen] = useState(false);
  const { signOut, pending } = useSignOut();
  const router = useRouter();
  return (
    <View style={placement === 'rail' ? styles.railWrap : styles.barWrap}>
      <Pressable
        role="button"
        aria-label="Account menu"
        aria-expanded={open}
        onPress={() => setOpen((o) => !o)}
        style={placement === 'rail' ? styles.railButton : styles.barButton}
      >
        <View style={styles.avatar}>
          <Text style={styles.avatarText}>{initials(user.name)}</Text>
        </View>
        {placement === 'rail' ? (
          <View style={{ flex: 1, minWidth: 0 }}>
            <Text style={styles.railName} numberOfLines={1}>
              {user.name}
            </Text>
            <Text style={styles.railRole}>{ROLE_LABELS[user.role]}</Text>
          </View>
        ) : null}
      </Pressable>
      {open ? (
        <View style={[styles.panel, placement === 'rail' ? styles.panelRail : styles.panelBar]} role="menu" aria-label="Account">
          <Text style={text.strong}>{user.name}</Text>
          <Text style={text.muted}>{user.email}</Text>
          <Text style={text.body}>
            Role: <Text style={{ fontFamily: fonts.textStrong }}>{ROLE_LABELS[user.role]}</Text>
          </Text>
          <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
            <Button
              label="Account"
              compact
              onPress={() => {
                setOpen(false);
                router.push('/account');
              }}
            />
            <Button label="Sign out" compact variant="primary" busy={pending} onPress={signOut} />
          </View>
        </View>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  barWrap: { position: 'relative', zIndex: 20 },
  railWrap: { position: 'relative', alignSelf: 'stretch', zIndex: 20 },
  barButton: { padding: 4 },
  railButton: { flexDirection: 'row', alignItems: 'center', gap: space.sm, padding: space.sm, borderRadius: radius.sm },
  avatar: { width: 34, height: 34, borderRadius: 17, backgroundColor: colors.brass, alignItems: 'center', justifyContent: 'center' },
  avatarText: { color: colors.onDark, fontFamily: fonts.textStrong, fontSize: 13 },
  railName: { color: colors.onDark, fontFamily: fonts.textStrong, fontSize: 14 },
  railRole: { color: '#C9D3DC', fontFamily: fonts.text, fontSize: 12 },
  panel: {
    position: 'absolute',
    width: 260,
    backgroundColor: colors.card,
    borderWidth: 1,
    borderColor: colors.rule,
    borderRadius: radius.md,
    padding: space.md,
    gap: space.sm,
    shadowColor: colors.ink,
    shadowOpacity: 0.18,
    shadowRadius: 12,
    shadowOffset: { width: 0, height: 4 },
  },
  panelBar: { top: 44, right: 0 },
  panelRail: { bottom: 52, left: 0 },
});
