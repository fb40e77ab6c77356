import { Text } from 'react-native';
import { useAdminOutbox } from '../../../hooks/use-admin';
import { ErrorView } from '../../../components/error-view';
import { MailList } from '../../../components/mail-list';
import { Screen } from '../../../components/screen';
import { TeamTabs } from '../../../components/team-tabs';
import { text } from '../../../components/theme';

export default function TeamOutbox() {
  const outbox = useAdminOutbox();
  return (
    <Screen title="Team" subtitle="Outbox: every e-mail Keelson has sent, newest first.">
      <TeamTabs />
      {outbox.isError ? <ErrorView error={outbox.error} onRetry={() => void outbox.refetch()} /> : null}
      {outbox.isPending ? <Text style={text.muted}>Loading mail…</Text> : null}
      {outbox.data ? <MailList messages={outbox.data} emptyBody="Invitations and other mail appear here once sent." /> : null}
    </Screen>
  );
}
