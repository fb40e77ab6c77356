/** Run header pieces: status chip, the frozen spec in words, export links, the run caution. */
import { useEffect, useState } from 'react';
import { ActivityIndicator, Platform, StyleSheet, Text, View } from 'react-native';
import type { Run, RunStatus } from '../shared/runs';
import type { User } from '../shared/auth';
import { useCancelRun } from '../hooks/use-runs';
import { Button } from './button';
import { ErrorView } from './error-view';
import { RUN_CAUTION } from '../shared/runs';
import { exportHref } from '../api/runs';
import { Chip, type ChipShape, type ChipTone } from './chip';
import { Caution } from './caution';
import { colors, fonts, radius, space, text } from './theme';

const STATUS: Record<RunStatus, { shape: ChipShape; tone: ChipTone }> = {
  queued: { shape: 'dashed', tone: 'fog' },
  running: { shape: 'outlined', tone: 'brass' },
  finished: { shape: 'filled', tone: 'kelp' },
  failed: { shape: 'filled', tone: 'rust' },
  cancelled: { shape: 'dashed', tone: 'slate' },
};

export function RunStatusChip({ status }: { status: RunStatus }) {
  return <Chip label={status} {...STATUS[status]} accessibilityLabel={`Run ${status}`} />;
}

/**
 * A heavy run before its ledger exists: queued (waiting for the pool or a queue worker) or running
 * (with the time it has taken and the server's notice, e.g. a lost Redis connection). The page
 * polls the run and replaces this with the ledger when it finishes. Its author or an admin may
 * cancel it (asked to confirm first).
 */
export function RunPending({ run, me }: { run: Pick<Run, 'id' | 'authorId' | 'status' | 'startedAt' | 'createdAt' | 'error'>; me: User | null | undefined }) {
  const [now, setNow] = useState(() => Date.now());
  const [asking, setAsking] = useState(false);
  const cancel = useCancelRun();
  const mayCancel = !!me && (me.role === 'admin' || (me.role === 'researcher' && me.id === run.authorId));
  useEffect(() => {
    const t = setInterval(() => setNow(Date.now()), 1000);
    return () => clearInterval(t);
  }, []);
  const since = Date.parse(run.status === 'running' && run.startedAt ? run.startedAt : run.createdAt);
  const seconds = Number.isFinite(since) ? Math.max(0, Math.round((now - since) / 1000)) : null;
  const what =
    run.status === 'queued'
      ? 'Queued: this run is large enough to be estimated in the background, and waits for a free worker.'
      : 'Estimating on a worker: GMM fit, drop tests and spanning checks of every factor.';
  return (
    <View style={styles.pending} accessibilityRole="progressbar" accessibilityLabel={`Run ${run.status}`}>
      <ActivityIndicator color={colors.brass} />
      <View style={{ flex: 1, gap: space.xs }}>
        <Text style={text.body}>{what}</Text>
        <Text style={text.muted}>
          {seconds === null ? '' : `${run.status === 'queued' ? 'Waiting' : 'Running'} for ${seconds} s. `}This page updates by itself; you may leave it and come back.
        </Text>
        {run.status === 'running' && run.error ? <Text style={text.body}>{run.error}</Text> : null}
        {mayCancel && !asking ? (
          <View style={{ flexDirection: 'row' }}>
            <Button compact variant="quiet" label="Cancel this run" accessibilityLabel={`Cancel run #${run.id}`} onPress={() => setAsking(true)} />
          </View>
        ) : null}
        {asking ? (
          <View role="alert" aria-label={`Confirm cancelling run #${run.id}`} style={styles.confirm}>
            <Text style={text.body}>Cancel run #{run.id}? Nothing has been estimated yet; the run is kept as cancelled and you can start its spec again.</Text>
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm }}>
              <Button
                compact
                variant="danger"
                label="Yes, cancel it"
                accessibilityLabel={`Yes, cancel run #${run.id}`}
                busy={cancel.isPending}
                onPress={() => cancel.mutate(run.id, { onSettled: () => setAsking(false) })}
              />
              <Button compact variant="quiet" label="Keep it" accessibilityLabel={`Keep run #${run.id}`} onPress={() => setAsking(false)} />
            </View>
          </View>
        ) : null}
        {cancel.error ? <ErrorView error={cancel.error} title="Could not cancel the run" /> : null}
      </View>
    </View>
  );
}

function Pair({ k, v }: { k: string; v: string }) {
  return (
    <View style={styles.pair}>
      <Text style={text.label}>{k}</Text>
      <Text style={text.body}>{v}</Text>
    </View>
  );
}

export function RunSpecSummary({ run }: { run: Run }) {
  const s = run.spec;
  const r = run.result;
  return (
    <View style={styles.grid}>
      <Pair k="Library" v={`${run.libraryName}, edition ${run.editionNumber}`} />
      <Pair k="Test assets (N)" v={`${s.assets.length}${s.rf ? `, minus ${s.rf}` : ''}`} />
      <Pair k="Factors (K)" v={s.factors.map((f) => (s.nonTraded.includes(f) ? `${f} (not traded)` : f)).join(', ')} />
      <Pair k="Window" v={r ? `T = ${r.T}${s.window?.start || s.window?.end ? ` (${s.window?.start ?? 'start'} – ${s.window?.end ?? 'end'})` : ', whole edition'}` : `${s.window?.start ?? 'start'} – ${s.window?.end ?? 'end'}`} />
      <Pair k="Estimation" v={`${s.stage} stage, ${s.weighting} first-stage weighting, ${s.form} SDF`} />
      <Pair k="Standard errors" v={`HAC lag ${s.lags === 'auto' ? `auto${r ? ` (${r.lags})` : ''}` : s.lags}; factor means ${s.factorMeansKnown ? 'known' : 'estimated'}`} />
      <Pair k="Level" v={String(s.level)} />
      {s.dropSet?.length ? <Pair k="Joint drop set" v={s.dropSet.join(', ')} /> : null}
      <Pair k="Keelson" v={`version ${run.keelsonVersion}`} />
    </View>
  );
}

/** Download links (same-origin anchors on web). */
export function RunExports({ run }: { run: Run }) {
  if (run.status !== 'finished') return null;
  const links: [string, 'export.csv' | 'export.tex' | 'result.json'][] = [
    ['CSV', 'export.csv'],
    ['LaTeX', 'export.tex'],
    ['JSON', 'result.json'],
  ];
  return (
    <View style={{ flexDirection: 'row', gap: space.sm, flexWrap: 'wrap' }}>
      {links.map(([label, kind]) => {
        const href = exportHref(run.id, kind);
        const webProps = Platform.OS === 'web' ? ({ href, hrefAttrs: { download: `keelson-run-${run.id}.${kind.split('.')[1]}` } } as object) : {};
        return (
          <Text key={kind} role="link" style={styles.link} aria-label={`Export ${label}`} {...webProps}>
            ↓ {label}
          </Text>
        );
      })}
    </View>
  );
}

/** Shown once per run. */
export function RunCaution() {
  return <Caution>{RUN_CAUTION.replace('These results are statistical evidence about a model on past data, not investment advice. ', 'They describe a model on past data. ')}</Caution>;
}

const styles = StyleSheet.create({
  grid: { flexDirection: 'row', flexWrap: 'wrap', gap: space.md },
  pair: { flexGrow: 1, flexBasis: 220, gap: 2 },
  confirm: { gap: space.sm, padding: space.sm, backgroundColor: colors.card, borderRadius: radius.sm },
  pending: { flexDirection: 'row', gap: space.md, alignItems: 'flex-start', padding: space.md, borderRadius: radius.md, backgroundColor: colors.brassTint },
  link: {
    fontFamily: fonts.textStrong,
    fontSize: 15,
    color: colors.ink,
    borderWidth: 1,
    borderColor: colors.ink,
    borderRadius: radius.sm,
    paddingHorizontal: space.md,
    paddingVertical: 8,
    backgroundColor: colors.card,
  },
});
