import { Text, View } from 'react-native';
import { ROLE_LABELS } from '../../shared/roles';
import { useMe, useMyOutbox } from '../../hooks/use-session';
import { useSignOut } from '../../components/account-menu';
import { Button } from '../../components/button';
import { Card } from '../../components/card';
import { ErrorView } from '../../components/error-view';
import { MailList } from '../../components/mail-list';
import { Screen } from '../../components/screen';
import { space, text } from '../../components/theme';

export default function Account() {
  const me = useMe().data;
  const mail = useMyOutbox();
  const { signOut, pending } = useSignOut();
  if (!me) return null;
  return (
    <Screen title="Account" subtitle="Who you are signed in as, and mail Keelson sent you.">
      <Card title={me.name} subtitle={me.email}>
        <Text style={text.body}>Role: {ROLE_LABELS[me.role]}. Only an admin can change roles.</Text>
        <View style={{ flexDirection: 'row', gap: space.sm }}>
          <Button label="Sign out" variant="primary" onPress={signOut} busy={pending} />
        </View>
      </Card>
      <Text style={text.heading} role="heading" aria-level={2}>
        Mail sent to you
      </Text>
      {mail.isError ? <ErrorView error={mail.error} /> : null}
      {mail.data ? <MailList messages={mail.data} emptyBody="Keelson has not sent you any e-mail." /> : null}
    </Screen>
  );
}
