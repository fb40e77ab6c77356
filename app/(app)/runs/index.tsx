import { Text, View } from 'react-native';
import { useMe } from '../../../hooks/use-session';
import { Card } from '../../../components/card';
import { Caution } from '../../../components/caution';
import { Chip } from '../../../components/chip';
import { LinkCard } from '../../../components/link-card';
import { Screen } from '../../../components/screen';
import { space, text } from '../../../components/theme';

const STATES = [
  { label: 'queued', shape: 'dashed', tone: 'fog' },
  { label: 'running', shape: 'outlined', tone: 'brass' },
  { label: 'finished', shape: 'filled', tone: 'kelp' },
  { label: 'failed', shape: 'filled', tone: 'rust' },
  { label: 'cancelled', shape: 'dashed', tone: 'slate' },
] as const;

export default function Runs() {
  const me = useMe().data;
  const researcher = me?.role === 'researcher';
  return (
    <Screen title="Runs" subtitle="Each run estimates one model spec on one library edition.">
      {researcher ? (
        <Card title="New model spec" subtitle="Researchers only">
          <Text style={text.body}>
            A model spec names the test assets and factors from a library edition and sets the moment conditions: first or second stage, the weighting
            matrix and the HAC (Newey–West) lags. Starting it creates a run.
          </Text>
          <Text style={text.muted}>Start by choosing the library edition the spec will use.</Text>
        </Card>
      ) : null}
      <Card title="What this section holds">
        <Text style={text.body}>
          The list of runs with their state, and for each finished run its factor ledger: SDF loadings b (needed?) beside prices of risk λ (priced?),
          drop tests with a common weighting matrix, the spanning check, the thin-beta flag and a verdict per factor, with J, HJ distance, pricing
          errors, GRS and Fama–MacBeth beside it. A finished run never changes; two runs can be compared side by side.
        </Text>
        <Text style={text.label}>Run states</Text>
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
          {STATES.map((s) => (
            <Chip key={s.label} label={s.label} shape={s.shape} tone={s.tone} />
          ))}
        </View>
      </Card>
      <Caution />
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
        <LinkCard title="Return libraries" body="The library editions runs are built on." action="Open libraries" href="/libraries" primary={researcher} />
      </View>
    </Screen>
  );
}
