/**
 * The basis of a run's verdicts (glossary: standard, robust, bootstrap) on the run page:
 * - LedgerBasisBar, above the ledger: which basis the verdicts rest on, the run's bootstrap
 *   progress until its p-values arrive, why robust SEs are missing (second-stage or iterated
 *   runs) with a one-click first-stage copy, and the small-sample caution next to the verdicts;
 * - BasisSwitcher: start the run again on another basis. A finished run never changes, so each
 *   choice creates a new run (POST /runs/:id/basis) and opens it.
 */
import { Text, View } from 'react-native';
import { router } from 'expo-router';
import type { User } from '../shared/auth';
import type { Run } from '../shared/runs';
import { useChangeBasis, useFirstStageCopy } from '../hooks/use-runs';
import { Button } from './button';
import { BASIS_LABEL, Chip, type VerdictBasis } from './chip';
import { CAUTION_TEXT } from './caution';
import { ErrorView } from './error-view';
import { JobProgress } from './job-progress';
import type { Job } from '../shared/jobs';
import { colors, fonts, radius, space, text } from './theme';

const BASES: readonly VerdictBasis[] = ['standard', 'robust', 'bootstrap'];

const BASIS_WORDS: Readonly<Record<VerdictBasis, string>> = {
  standard: 'standard errors that assume the model prices the test assets exactly',
  robust: 'misspecification-robust standard errors (first-stage runs)',
  bootstrap: 'recentred bootstrap p-values',
};

/** May `me` start new runs from `run` (its author as researcher, or an admin)? The server checks the same. */
export function mayRerun(run: Run, me: User | null | undefined): boolean {
  return !!me && (me.role === 'admin' || (me.role === 'researcher' && me.id === run.authorId));
}

/** Basis chip: "verdicts on the robust basis". */
export function BasisChip({ basis }: { basis: VerdictBasis }) {
  return <Chip label={`verdicts on the ${BASIS_LABEL[basis]}`} shape="outlined" tone="brass" accessibilityLabel={`Verdict basis: ${basis}`} />;
}

export interface LedgerBasisBarProps {
  run: Run;
  me: User | null | undefined;
  /** The run's own bootstrap job while its p-values are not in the ledger (useRunBootstrap). */
  bootstrapJob: Job | undefined;
  bootstrapPending: boolean;
}

export function LedgerBasisBar({ run, me, bootstrapJob, bootstrapPending }: LedgerBasisBarProps) {
  const r = run.result!;
  const copy = useFirstStageCopy(run.id);
  const may = mayRerun(run, me);
  const why =
    r.basis === r.verdictBasis
      ? null
      : r.basis === 'bootstrap' && !r.bootstrap
        ? `The bootstrap basis was asked for; until its bootstrap finishes the verdicts rest on the ${r.verdictBasis} basis.`
        : r.basis === 'robust'
          ? `The robust basis was asked for but robust SEs are not available; the verdicts rest on the ${r.verdictBasis} basis.`
          : `The verdicts rest on the ${r.verdictBasis} basis.`;
  const job = bootstrapJob;
  const ended = job && !bootstrapPending && job.status !== 'finished';
  return (
    <View style={{ gap: space.sm }}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }} aria-label="Verdict basis">
        <BasisChip basis={r.verdictBasis} />
        <Text style={[text.muted, { flexShrink: 1 }]}>{BASIS_WORDS[r.verdictBasis]}</Text>
      </View>
      {why ? <Text style={text.body}>{why}</Text> : null}
      {bootstrapPending && job ? (
        <View style={{ borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, paddingHorizontal: space.sm }} aria-label="Bootstrap p-values for this ledger">
          <Text style={[text.strong, { paddingTop: space.sm }]}>Bootstrap p-values for this ledger</Text>
          <Text style={text.muted}>They appear in the ledger when the bootstrap finishes; no reload needed.</Text>
          <JobProgress job={job} />
        </View>
      ) : bootstrapPending ? (
        <Text style={text.muted}>Bootstrap p-values: waiting for the bootstrap…</Text>
      ) : null}
      {ended ? (
        <Text style={[text.body, { color: colors.rust }]} role="alert">
          The run’s bootstrap {job.status}
          {job.error ? `: ${job.error}` : ''}. The ledger shows asymptotic p-values only.
        </Text>
      ) : null}
      {r.robustNote ? (
        <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm, borderLeftWidth: 3, borderLeftColor: colors.fog, paddingLeft: space.sm }}>
          <Text style={[text.body, { flexGrow: 1, flexShrink: 1, flexBasis: 260 }]} aria-label="Why robust SEs are not shown">
            {r.robustNote}
          </Text>
          {r.stage !== 'first' && may ? (
            <Button
              label="Make a first-stage copy"
              accessibilityLabel={`Make a first-stage copy of run ${run.id}`}
              compact
              busy={copy.isPending}
              onPress={() => copy.mutateAsync().then((out) => router.push(`/runs/${out.run.id}`))}
            />
          ) : null}
        </View>
      ) : null}
      {r.robustNote && r.stage !== 'first' && may ? (
        <Text style={text.muted}>
          The copy keeps the spec but estimates at the first stage on the robust basis; it is a new run{run.specId ? ' and a new saved spec' : ''}. Run #{run.id} is not changed.
        </Text>
      ) : null}
      {copy.isError ? <ErrorView error={copy.error} title="The first-stage copy was not made" /> : null}
      {r.caution ? (
        <View style={{ borderWidth: 1, borderColor: colors.brass, backgroundColor: colors.brassTint, borderRadius: radius.sm, padding: space.sm }} role="note" aria-label="Caution about the verdicts">
          <Text style={{ fontFamily: fonts.text, fontSize: 13, color: colors.ink }}>! {r.caution}</Text>
        </View>
      ) : null}
    </View>
  );
}

/** Start the run again on another basis (a new run); the finished run is not changed. */
export function BasisSwitcher({ run, me }: { run: Run; me: User | null | undefined }) {
  const r = run.result!;
  const change = useChangeBasis(run.id);
  const may = mayRerun(run, me);
  const boot = run.spec.bootstrap;
  const bootWords = boot
    ? `its bootstrap settings (${boot.draws} draws, ${boot.scheme === 'block' ? 'moving blocks' : 'iid'}, seed ${boot.seed})`
    : 'the default bootstrap (999 draws, iid, seed 1)';
  return (
    <View style={{ gap: space.sm }}>
      <Text style={text.body}>
        Run #{run.id} asked for the {r.basis} basis. A finished run is never changed: choosing another basis starts a new run of the same spec on the same
        edition and opens it; run #{run.id} itself stays as it is.
      </Text>
      <View role="radiogroup" aria-label="Basis of the verdicts" style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
        {BASES.map((b) => {
          const current = b === r.basis;
          const robustBlocked = b === 'robust' && r.stage !== 'first';
          return (
            <Button
              key={b}
              label={current ? `${b} (this run)` : `New run on the ${b} basis`}
              accessibilityLabel={current ? `The ${b} basis: this run` : `Start a new run on the ${b} basis`}
              variant={current ? 'primary' : 'secondary'}
              compact
              disabled={current || robustBlocked || !may || change.isPending}
              busy={change.isPending && change.variables?.basis === b}
              onPress={() => change.mutateAsync({ basis: b }).then((next) => router.push(`/runs/${next.id}`))}
            />
          );
        })}
      </View>
      {r.stage !== 'first' ? <Text style={text.muted}>Robust needs a first-stage run: use the first-stage copy above.</Text> : null}
      {r.basis !== 'bootstrap' ? <Text style={text.muted}>The bootstrap basis uses {bootWords}; its p-values arrive while the new run is open.</Text> : null}
      {!may ? <Text style={text.muted}>Only the run’s author (a researcher) or an admin can start it on another basis.</Text> : null}
      {change.isError ? <ErrorView error={change.error} title="The new run was not started" /> : null}
      <Text style={{ fontFamily: fonts.textStrong, fontSize: 13, color: colors.ink }} role="note">
        {CAUTION_TEXT}
      </Text>
    </View>
  );
}
