import { Text, View } from 'react-native';
import { useMe } from '../../../hooks/use-session';
import { Card } from '../../../components/card';
import { LinkCard } from '../../../components/link-card';
import { Screen } from '../../../components/screen';
import { colors, space, text } from '../../../components/theme';

export default function Libraries() {
  const me = useMe().data;
  const canUpload = me?.role === 'researcher' || me?.role === 'admin';
  return (
    <Screen title="Return libraries" subtitle="Tables of dated return series that model specs are built on.">
      <Card title="What this section holds">
        <Text style={text.body}>
          Each return library is one uploaded table of dated returns. Every upload of a changed table becomes a new edition (edition 1, 2, …), so a
          finished run always points at the exact edition it used.
        </Text>
        <Text style={text.body}>
          Each column is a series of one kind: test asset, factor (traded or not traded) or risk-free rate. Libraries are shared with the whole team
          (set by an admin) or private to the researcher who uploaded them.
        </Text>
        <Text style={[text.body, { color: colors.slate }]}>
          {canUpload
            ? 'You can upload libraries. Bad rows, misaligned dates, missing values and percent-vs-decimal mix-ups are reported before anything is saved.'
            : 'Your role reads libraries; researchers and admins upload them.'}
        </Text>
      </Card>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <LinkCard title="Runs" body="Runs built on a library edition, with their factor ledgers." action="See runs" href="/runs" />
        <LinkCard title="Home" body="Back to what you can do next." action="Go to Home" href="/" />
      </View>
    </Screen>
  );
}
