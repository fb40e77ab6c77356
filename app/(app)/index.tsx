import { StyleSheet, View } from 'react-native';
import type { User } from '../../shared/auth';
import { ROLE_LABELS } from '../../shared/roles';
import { useMe } from '../../hooks/use-session';
import { Caution } from '../../components/caution';
import { LinkCard, type LinkCardProps } from '../../components/link-card';
import { Screen } from '../../components/screen';
import { space } from '../../components/theme';

/** Every role reads how the numbers are made. */
const METHODS: LinkCardProps = {
  title: 'Methods',
  body: 'How Keelson estimates b and λ, which standard errors each basis uses, and the sources behind every test.',
  action: 'Read the methods',
  href: '/methods',
};

function nextSteps(user: User): LinkCardProps[] {
  const libraries: LinkCardProps = {
    title: 'Return libraries',
    body: 'Dated return series — test assets, factors and the risk-free rate — in numbered editions.',
    action: 'Open libraries',
    href: '/libraries',
  };
  switch (user.role) {
    case 'researcher':
      return [
        { title: 'Upload a return library', body: 'Bring a CSV of dated returns; Keelson checks dates, gaps and percent-vs-decimal before anything is saved.', action: 'Go to libraries', href: '/libraries', primary: true },
        { title: 'New model spec', body: 'Choose test assets and factors from a library edition and set the moment conditions, then start a run.', action: 'Go to runs', href: '/runs' },
        { title: 'Read a factor ledger', body: 'Each finished run shows b ("needed?") beside λ ("priced?"), drop tests and a verdict per factor.', action: 'See runs', href: '/runs' },
      ];
    case 'reviewer':
      return [
        { title: 'Runs awaiting sign-off', body: 'Read a run\u2019s factor ledger, comment, then approve it or request changes.', action: 'Open sign-offs', href: '/review', primary: true },
        { title: 'Runs', body: 'Every finished run with its ledger, tests and deep checks; compare two side by side.', action: 'See runs', href: '/runs' },
        libraries,
      ];
    case 'desk':
      return [
        { title: 'Read finished runs', body: 'See which factors a model needs and which are priced, with the test behind each verdict.', action: 'See runs', href: '/runs', primary: true },
        { title: 'Compare two runs', body: 'Put two runs side by side to see how the verdicts move between specs or editions.', action: 'Choose runs', href: '/runs' },
        libraries,
      ];
    case 'admin':
      return [
        { title: 'Team', body: 'Invite people, change roles, deactivate accounts, read the outbox and the audit log.', action: 'Open team', href: '/admin', primary: true },
        { title: 'Sign-offs', body: 'Runs that reviewers have approved or sent back with comments.', action: 'Open sign-offs', href: '/review' },
        { ...libraries, body: 'Manage shared libraries that every researcher can build model specs on.' },
        { title: 'Runs', body: 'Every run across the team, with its state and ledger.', action: 'See runs', href: '/runs' },
      ];
  }
}

export default function Home() {
  const me = useMe().data;
  if (!me) return null;
  const first = me.name.split(/\s+/)[0] ?? me.name;
  return (
    <Screen title={`Welcome, ${first}`} subtitle={`Signed in as ${ROLE_LABELS[me.role].toLowerCase()}. What you can do next:`}>
      <View style={styles.grid}>
        {[...nextSteps(me), METHODS].map((s) => (
          <LinkCard key={s.title} {...s} />
        ))}
      </View>
      <Caution>Every verdict links to the test behind it; read the test before acting on a verdict.</Caution>
    </Screen>
  );
}

const styles = StyleSheet.create({ grid: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md } });
