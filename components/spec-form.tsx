/**
 * The model spec form: library and edition, test assets, factors (traded or not), risk-free
 * series, window, SDF form, stage, weighting, factor means, HAC lag, level and a joint drop set.
 * react-hook-form with the shared zod schema; shows N, K, T and df = N − K as they change and
 * refuses impossible choices before submit (the server refuses them too).
 */
import { useEffect, useMemo, useState } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import { Controller, useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { checkSpecAgainstEdition, modelSpecSchema, specNameSchema, SPEC_HELP, type ModelSpec, type ModelSpecInput } from '../shared/specs';
import { useSpecEdition, useSpecLibraries, useSpecLibrary } from '../hooks/use-specs';
import { Button } from './button';
import { Card } from './card';
import { ErrorView } from './error-view';
import { Select } from './select';
import { TextField } from './text-field';
import { colors, fonts, radius, space, text } from './theme';

export const specFormSchema = z.object({ name: specNameSchema, spec: modelSpecSchema });
export type SpecFormInput = z.input<typeof specFormSchema>;
export type SpecFormOutput = z.output<typeof specFormSchema>;

export interface SpecFormSubmit {
  name: string;
  editionId: number;
  spec: ModelSpec;
  /** 'save' keeps the spec; 'save-run' saves it then runs it; 'run' runs without saving. */
  action: 'save' | 'save-run' | 'run';
}

export interface SpecFormProps {
  initial?: { name: string; libraryId: number; editionNumber: number; spec: ModelSpecInput };
  busy?: boolean;
  error?: unknown;
  onSubmit: (v: SpecFormSubmit) => void;
  /** Labels of the save button (editing vs new). */
  saveLabel?: string;
  allowRunOnly?: boolean;
}

function Toggle({ label, on, onPress, hint }: { label: string; on: boolean; onPress: () => void; hint?: string }) {
  return (
    <Pressable onPress={onPress} role="checkbox" aria-checked={on} aria-label={hint ?? label} style={[styles.toggle, on && styles.toggleOn]}>
      <Text style={[styles.toggleMark, on && { color: colors.ink }]} aria-hidden>
        {on ? '☑' : '☐'}
      </Text>
      <Text style={[styles.toggleText, on && { fontFamily: fonts.textStrong }]}>{label}</Text>
    </Pressable>
  );
}

function Help({ children }: { children: string }) {
  return <Text style={text.muted}>{children}</Text>;
}

function Count({ label, value, bad }: { label: string; value: string; bad?: boolean }) {
  return (
    <View style={[styles.count, bad && { borderColor: colors.rust }]}>
      <Text style={text.label}>{label}</Text>
      <Text style={[styles.countNum, bad && { color: colors.rust }]}>{value}</Text>
    </View>
  );
}

const EMPTY: ModelSpecInput = {
  assets: [],
  factors: [],
  nonTraded: [],
  stage: 'second',
  weighting: 'identity',
  lags: 'auto',
  form: 'centred',
  factorMeansKnown: false,
  level: 0.05,
};

export function SpecForm({ initial, busy, error, onSubmit, saveLabel = 'Save spec', allowRunOnly = true }: SpecFormProps) {
  const libs = useSpecLibraries();
  const [libraryId, setLibraryId] = useState<number | undefined>(initial?.libraryId);
  const lib = useSpecLibrary(libraryId);
  const [editionNumber, setEditionNumber] = useState<number | undefined>(initial?.editionNumber);
  const edition = useSpecEdition(libraryId, editionNumber);
  const [action, setAction] = useState<SpecFormSubmit['action']>('save-run');
  const [lagText, setLagText] = useState(typeof initial?.spec.lags === 'number' ? String(initial.spec.lags) : '');

  const form = useForm<SpecFormInput, unknown, SpecFormOutput>({
    resolver: zodResolver(specFormSchema),
    defaultValues: { name: initial?.name ?? '', spec: { ...EMPTY, ...(initial?.spec ?? {}) } },
    mode: 'onChange',
  });
  const { control, handleSubmit, setValue, formState } = form;
  const spec = useWatch({ control, name: 'spec' }) as ModelSpecInput;

  // choose the library's latest edition when a library is picked
  useEffect(() => {
    if (lib.data && editionNumber === undefined && lib.data.latestEdition) setEditionNumber(lib.data.latestEdition);
  }, [lib.data, editionNumber]);

  const ed = edition.data;
  const assetsAvail = useMemo(() => (ed ? ed.series.filter((s) => s.kind === 'asset').map((s) => s.name) : []), [ed]);
  const factorsAvail = useMemo(() => (ed ? ed.series.filter((s) => s.kind === 'factor') : []), [ed]);
  const rfAvail = useMemo(() => (ed ? ed.series.filter((s) => s.kind === 'rf').map((s) => s.name) : []), [ed]);
  const check = ed ? checkSpecAgainstEdition(spec, ed) : null;
  const parsed = modelSpecSchema.safeParse(spec);
  const schemaIssues = parsed.success ? [] : parsed.error.issues.map((i) => i.message);
  const issues = [...new Set([...schemaIssues, ...(check?.issues.map((i) => i.message) ?? [])])];
  const blocked = !ed || issues.length > 0;

  const set = (k: keyof ModelSpecInput, v: unknown) => setValue(`spec.${k}` as 'spec.assets', v as string[], { shouldValidate: true, shouldDirty: true });
  const toggleIn = (k: 'assets' | 'factors' | 'nonTraded' | 'dropSet', name: string) => {
    const cur = (spec[k] ?? []) as string[];
    const next = cur.includes(name) ? cur.filter((x) => x !== name) : [...cur, name];
    set(k, next);
    if (k === 'factors') {
      // keep non-traded flags and the drop set inside the chosen factors; default traded flag from the edition
      const info = factorsAvail.find((f) => f.name === name);
      const nt = (spec.nonTraded ?? []).filter((x) => next.includes(x));
      if (!cur.includes(name) && info && !info.traded && !nt.includes(name)) nt.push(name);
      set('nonTraded', nt);
      const ds = (spec.dropSet ?? []).filter((x) => next.includes(x));
      set('dropSet', ds.length ? ds : undefined);
    }
    if (k === 'dropSet' && next.length === 0) set('dropSet', undefined);
  };
  const pickEdition = (n: number) => {
    setEditionNumber(n);
  };

  const submit = (a: SpecFormSubmit['action']) =>
    handleSubmit((v) => {
      if (!ed) return;
      onSubmit({ name: v.name, editionId: ed.editionId, spec: v.spec, action: a });
    });

  return (
    <View style={{ gap: space.lg }}>
      <Card title="Data" subtitle={SPEC_HELP.library}>
        {libs.isError ? <ErrorView error={libs.error} title="Libraries could not be loaded" /> : null}
        {libs.data && libs.data.length === 0 ? <Text style={text.body}>No library yet: upload one under Libraries first.</Text> : null}
        {libs.data ? (
          <Select
            label="Library"
            value={libraryId ? String(libraryId) : undefined}
            options={libs.data.filter((l) => (l.latestEdition ?? 0) > 0).map((l) => ({ value: String(l.id), label: l.name }))}
            onChange={(v) => {
              setLibraryId(Number(v));
              setEditionNumber(undefined);
              set('assets', []);
              set('factors', []);
              set('nonTraded', []);
              set('rf', undefined);
              set('dropSet', undefined);
              set('window', undefined);
            }}
          />
        ) : null}
        {lib.data && lib.data.editions.length > 0 ? (
          <Select
            label="Edition"
            value={editionNumber ? String(editionNumber) : undefined}
            options={lib.data.editions.map((e) => ({ value: String(e.number), label: `Edition ${e.number} (${e.firstDate} – ${e.lastDate})` }))}
            onChange={(v) => pickEdition(Number(v))}
          />
        ) : null}
        {edition.isPending && editionNumber ? <Text style={text.muted}>Loading the edition…</Text> : null}
        {edition.isError ? <ErrorView error={edition.error} title="The edition could not be loaded" /> : null}
      </Card>

      {ed ? (
        <>
          <Card title="Test assets" subtitle={SPEC_HELP.assets}>
            <View style={styles.row}>
              <Button label={`All ${assetsAvail.length} test assets`} compact onPress={() => set('assets', [...assetsAvail])} />
              <Button label="None" compact variant="quiet" onPress={() => set('assets', [])} />
            </View>
            <View style={styles.wrap} role="group" aria-label="Test assets">
              {assetsAvail.map((a) => (
                <Toggle key={a} label={a} on={(spec.assets ?? []).includes(a)} onPress={() => toggleIn('assets', a)} hint={`Test asset ${a}`} />
              ))}
            </View>
          </Card>

          <Card title="Factors" subtitle={SPEC_HELP.factors}>
            <View style={styles.wrap} role="group" aria-label="Factors">
              {factorsAvail.map((f) => (
                <Toggle key={f.name} label={f.name} on={(spec.factors ?? []).includes(f.name)} onPress={() => toggleIn('factors', f.name)} hint={`Factor ${f.name}`} />
              ))}
            </View>
            {(spec.factors ?? []).length > 0 ? (
              <View style={{ gap: space.xs }}>
                <Text style={text.label}>Traded?</Text>
                <Help>{SPEC_HELP.nonTraded}</Help>
                <View style={styles.wrap}>
                  {(spec.factors ?? []).map((f) => {
                    const traded = !(spec.nonTraded ?? []).includes(f);
                    return <Toggle key={f} label={`${f} traded`} on={traded} onPress={() => toggleIn('nonTraded', f)} hint={`${f} is traded`} />;
                  })}
                </View>
              </View>
            ) : null}
          </Card>

          <Card title="Returns and window">
            <Select
              label="Risk-free series"
              value={spec.rf ?? '__none'}
              options={[{ value: '__none', label: 'none (assets are excess returns)' }, ...rfAvail.map((r) => ({ value: r, label: `subtract ${r}` }))]}
              onChange={(v) => set('rf', v === '__none' ? undefined : v)}
            />
            <Help>{SPEC_HELP.rf}</Help>
            <View style={styles.row}>
              <View style={{ flexGrow: 1, flexBasis: 140 }}>
                <TextField
                  label="Window start"
                  value={spec.window?.start ?? ''}
                  placeholder={ed.dates[0]}
                  onChangeText={(v) => set('window', { ...(spec.window ?? {}), start: v.trim() || undefined })}
                />
              </View>
              <View style={{ flexGrow: 1, flexBasis: 140 }}>
                <TextField
                  label="Window end"
                  value={spec.window?.end ?? ''}
                  placeholder={ed.dates[ed.dates.length - 1]}
                  onChangeText={(v) => set('window', { ...(spec.window ?? {}), end: v.trim() || undefined })}
                />
              </View>
            </View>
            <Help>{`${SPEC_HELP.window} This edition runs ${ed.dates[0]} – ${ed.dates[ed.dates.length - 1]} (${ed.dates.length} ${ed.frequency === 'daily' ? 'days' : 'months'}).`}</Help>
          </Card>

          <Card title="Estimation">
            <Select label="SDF form" value={spec.form} options={[{ value: 'centred', label: 'centred' }, { value: 'uncentred', label: 'uncentred' }]} onChange={(v) => set('form', v)} />
            <Help>{SPEC_HELP.form}</Help>
            <Select
              label="Stage"
              value={spec.stage}
              options={[{ value: 'first', label: 'first' }, { value: 'second', label: 'second' }, { value: 'iterated', label: 'iterated' }]}
              onChange={(v) => set('stage', v)}
            />
            <Help>{SPEC_HELP.stage}</Help>
            <Select
              label="First-stage weighting"
              value={spec.weighting}
              options={[{ value: 'identity', label: 'identity' }, { value: 'second-moment', label: 'second moment' }]}
              onChange={(v) => set('weighting', v)}
            />
            <Help>{SPEC_HELP.weighting}</Help>
            <Select
              label="Factor means"
              value={spec.factorMeansKnown ? 'known' : 'estimated'}
              options={[{ value: 'estimated', label: 'estimated' }, { value: 'known', label: 'known' }]}
              onChange={(v) => set('factorMeansKnown', v === 'known')}
            />
            <Help>{SPEC_HELP.factorMeansKnown}</Help>
            <View style={styles.row}>
              <Select
                label="HAC lag"
                value={spec.lags === 'auto' || spec.lags === undefined ? 'auto' : 'fixed'}
                options={[{ value: 'auto', label: 'auto' }, { value: 'fixed', label: 'fixed' }]}
                onChange={(v) => set('lags', v === 'auto' ? 'auto' : Number(lagText || '0'))}
              />
              {spec.lags !== 'auto' && spec.lags !== undefined ? (
                <View style={{ width: 120 }}>
                  <TextField
                    label="Lag"
                    numeric
                    inputMode="numeric"
                    value={lagText}
                    onChangeText={(v) => {
                      setLagText(v);
                      set('lags', /^\d+$/.test(v) ? Number(v) : -1);
                    }}
                  />
                </View>
              ) : null}
            </View>
            <Help>{SPEC_HELP.lags}</Help>
            <Select
              label="Significance level"
              value={String(spec.level)}
              options={['0.1', '0.05', '0.01'].map((l) => ({ value: l, label: l }))}
              onChange={(v) => set('level', Number(v))}
            />
            <Help>{SPEC_HELP.level}</Help>
          </Card>

          {(spec.factors ?? []).length > 0 ? (
            <Card title="Joint drop test (optional)" subtitle={SPEC_HELP.dropSet}>
              <View style={styles.wrap} role="group" aria-label="Joint drop set">
                {(spec.factors ?? []).map((f) => (
                  <Toggle key={f} label={f} on={(spec.dropSet ?? []).includes(f)} onPress={() => toggleIn('dropSet', f)} hint={`Drop set ${f}`} />
                ))}
              </View>
            </Card>
          ) : null}

          <Card title="Name and start">
            <View style={styles.counts} aria-label="Model size">
              <Count label="N assets" value={String(check?.N ?? 0)} bad={(check?.N ?? 0) === 0} />
              <Count label="K factors" value={String(check?.K ?? 0)} bad={(check?.K ?? 0) === 0} />
              <Count label="T periods" value={String(check?.T ?? 0)} bad={!!check && check.T <= check.N + check.K} />
              <Count label="df = N − K" value={String(check?.df ?? 0)} bad={!!check && check.df < 0} />
            </View>
            {issues.length > 0 ? (
              <View style={styles.issues} role="alert" aria-label="Problems with this spec">
                {issues.map((m) => (
                  <Text key={m} style={styles.issue}>
                    • {m}
                  </Text>
                ))}
              </View>
            ) : (
              <Text style={text.muted}>The spec fits this edition. J will have {check?.df} degrees of freedom.</Text>
            )}
            <Controller
              control={control}
              name="name"
              render={({ field, fieldState }) => (
                <TextField label="Spec name" value={field.value} onChangeText={field.onChange} onBlur={field.onBlur} error={fieldState.error?.message} placeholder="e.g. Five factors, second stage" />
              )}
            />
            <View style={styles.row}>
              <Button label={`${saveLabel} and run`} variant="primary" busy={busy && action === 'save-run'} disabled={blocked || busy} onPress={() => { setAction('save-run'); void submit('save-run')(); }} />
              <Button label={saveLabel} busy={busy && action === 'save'} disabled={blocked || busy} onPress={() => { setAction('save'); void submit('save')(); }} />
              {allowRunOnly ? (
                <Button label="Run without saving" variant="quiet" busy={busy && action === 'run'} disabled={blocked || busy} onPress={() => { setAction('run'); void submit('run')(); }} />
              ) : null}
            </View>
            {formState.errors.name && !spec ? null : null}
            {error ? <ErrorView error={error} title="Keelson refused this spec" /> : null}
          </Card>
        </>
      ) : null}
    </View>
  );
}

const styles = StyleSheet.create({
  row: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, alignItems: 'flex-end' },
  wrap: { flexDirection: 'row', flexWrap: 'wrap', gap: space.xs },
  toggle: {
    flexDirection: 'row',
    alignItems: 'center',
    gap: 6,
    minHeight: 36,
    paddingHorizontal: space.sm,
    borderWidth: 1,
    borderColor: colors.rule,
    borderRadius: radius.sm,
    backgroundColor: colors.card,
  },
  toggleOn: { borderColor: colors.brass, backgroundColor: colors.brassTint },
  toggleMark: { fontSize: 16, color: colors.slate },
  toggleText: { fontFamily: fonts.text, fontSize: 14, color: colors.ink },
  counts: { flexDirection: 'row', flexWrap: 'wrap', gap: space.sm },
  count: { borderWidth: 1, borderColor: colors.rule, borderRadius: radius.sm, paddingHorizontal: space.md, paddingVertical: space.xs, minWidth: 84 },
  countNum: { fontFamily: fonts.mono, fontSize: 20, color: colors.ink, textAlign: 'right' },
  issues: { borderLeftWidth: 4, borderLeftColor: colors.rust, paddingLeft: space.sm, gap: 2 },
  issue: { fontFamily: fonts.text, fontSize: 14, color: colors.ink },
});
