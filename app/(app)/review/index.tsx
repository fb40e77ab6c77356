import { Text, View } from 'react-native';
import { Card } from '../../../components/card';
import { Chip } from '../../../components/chip';
import { LinkCard } from '../../../components/link-card';
import { RoleGate } from '../../../components/role-gate';
import { Screen } from '../../../components/screen';
import { space, text } from '../../../components/theme';

export default function Review() {
  return (
    <RoleGate roles={['reviewer', 'admin']} title="Sign-offs">
      <Screen title="Sign-offs" subtitle="A reviewer's decision on a finished run, with comments.">
        <Card title="What this section holds">
          <Text style={text.body}>
            Finished runs waiting for a reviewer, and the sign-offs already given. A reviewer reads the factor ledger, leaves comments and records one
            of two decisions; an approved run can be exported.
          </Text>
          <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
            <Chip label="approved" shape="filled" tone="kelp" />
            <Chip label="changes requested" shape="outlined" tone="rust" />
          </View>
        </Card>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
          <LinkCard title="Runs" body="Open a finished run to read its ledger before signing off." action="See runs" href="/runs" primary />
        </View>
      </Screen>
    </RoleGate>
  );
}
