/**
 * The model spec form: library and edition, test assets, factors (traded or not), risk-free
 * series (the edition's own by default), window, SDF form, stage, weighting (identity, second
 * moment, covariance), factor means, HAC lag, level, the basis of the verdict, bootstrap settings
 * and a joint drop set. react-hook-form with the shared zod schema; reads the edition's metadata
 * (names, kinds, dates — no values) and runs the shared `checkSpecAgainstEdition` as the choices
 * change, so it shows N, K, T, df = N − K and refuses impossible specs with the server's words
 * before submit. What the server still refuses comes back on the fields it names (`setError`).
 */
import { useEffect, useRef, useState } from 'react';
import { Pressable, StyleSheet, Text, View } from 'react-native';
import { Controller, get, useForm, useWatch } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import {
  checkSpecAgainstEdition,
  maxBlockLengthFor,
  modelSpecSchema,
  resolveBasis,
  specNameSchema,
  SPEC_HELP,
  type ModelSpec,
  type ModelSpecInput,
} from '../shared/specs';
import { newIdempotencyKey } from '../api/client';
import { useEditionMeta, useLibraries, useLibrary } from '../hooks/use-libraries';
import { useServerErrors } from '../hooks/use-form-errors';
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
  /**
   * Idempotency-Keys for the spec POST and the run POST of this action. The same action with the
   * same content gets the same keys again, so a retry after a lost answer (or a run refused after
   * its spec was saved) creates nothing twice.
   */
  keys: { spec: string; run: string };
}

export interface SpecFormProps {
  initial?: { name: string; libraryId: number; editionNumber: number; spec: ModelSpecInput };
  /** Something outside the form is pending (its buttons wait). */
  busy?: boolean;
  /** Saves and/or runs; a rejection (KeelsonApiError) is shown on the fields its issues name. */
  onSubmit: (v: SpecFormSubmit) => Promise<unknown>;
  /** Labels of the save button (editing vs new). */
  saveLabel?: string;
  allowRunOnly?: boolean;
}

/** Fields a server issue can land on (longest dotted prefix of its path wins). */
const SERVER_FIELDS = [
  'name',
  'spec',
  'spec.assets',
  'spec.factors',
  'spec.nonTraded',
  'spec.rf',
  'spec.window',
  'spec.form',
  'spec.stage',
  'spec.weighting',
  'spec.factorMeansKnown',
  'spec.lags',
  'spec.level',
  'spec.basis',
  'spec.bootstrap',
  'spec.dropSet',
] as const;

const BOOTSTRAP_DEFAULTS = { draws: 999, scheme: 'iid', seed: 1 } as const;

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

/** A whole number typed as text: the number, else a non-whole stand-in so the shared schema says "… is a whole number". */
function wholeOr(textValue: string): number {
  const t = textValue.trim();
  if (/^\d+$/.test(t)) return Number(t);
  const n = Number(t);
  return Number.isFinite(n) && t !== '' && !Number.isInteger(n) ? n : 0.5;
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

export function SpecForm({ initial, busy, onSubmit, saveLabel = 'Save spec', allowRunOnly = true }: SpecFormProps) {
  const libs = useLibraries({});
  const [libraryId, setLibraryId] = useState<number | undefined>(initial?.libraryId);
  const lib = useLibrary(libraryId);
  const [editionNumber, setEditionNumber] = useState<number | undefined>(initial?.editionNumber);
  const meta = useEditionMeta(libraryId, editionNumber);
  const [pendingAction, setPendingAction] = useState<SpecFormSubmit['action'] | null>(null);
  const [lagText, setLagText] = useState(typeof initial?.spec.lags === 'number' ? String(initial.spec.lags) : '');
  const [bootText, setBootText] = useState(() => ({
    draws: String(initial?.spec.bootstrap?.draws ?? BOOTSTRAP_DEFAULTS.draws),
    blockLength: initial?.spec.bootstrap?.blockLength !== undefined ? String(initial.spec.bootstrap.blockLength) : '',
    seed: String(initial?.spec.bootstrap?.seed ?? BOOTSTRAP_DEFAULTS.seed),
  }));
  // An edited spec keeps its own risk-free choice; a new one starts from the edition's risk-free series.
  const rfChosen = useRef(!!initial);
  const lastKeys = useRef<{ body: string; keys: SpecFormSubmit['keys'] } | null>(null);

  const form = useForm<SpecFormInput, unknown, SpecFormOutput>({
    resolver: zodResolver(specFormSchema),
    defaultValues: { name: initial?.name ?? '', spec: { ...EMPTY, ...(initial?.spec ?? {}) } },
    mode: 'onChange',
  });
  const { control, handleSubmit, setValue, getValues, setError, formState } = form;
  const spec = useWatch({ control, name: 'spec' }) as ModelSpecInput;
  const server = useServerErrors(setError, SERVER_FIELDS);

  const set = (k: keyof ModelSpecInput, v: unknown) => setValue(`spec.${k}` as 'spec.assets', v as string[], { shouldValidate: true, shouldDirty: true });

  // choose the library's latest edition when a library is picked
  useEffect(() => {
    if (lib.data && editionNumber === undefined && lib.data.latestEdition) setEditionNumber(lib.data.latestEdition);
  }, [lib.data, editionNumber]);

  const ed = meta.data;
  // default risk-free series: the edition's own, unless the user chose one that this edition has
  useEffect(() => {
    if (!ed) return;
    const cur = getValues('spec.rf');
    if (rfChosen.current && (cur === undefined || ed.series.some((s) => s.name === cur))) return;
    setValue('spec.rf', ed.riskFree ?? undefined, { shouldValidate: true });
  }, [ed, getValues, setValue]);

  const assetsAvail = ed ? ed.series.filter((s) => s.kind === 'asset').map((s) => s.name) : [];
  const factorsAvail = ed ? ed.series.filter((s) => s.kind === 'factor') : [];
  const rfAvail = ed ? ed.series.filter((s) => s.kind === 'rf').map((s) => s.name) : [];
  const check = ed ? checkSpecAgainstEdition(spec, ed) : null;
  const parsed = modelSpecSchema.safeParse(spec);
  const schemaIssues = parsed.success ? [] : parsed.error.issues.map((i) => i.message);
  const issues = [...new Set([...schemaIssues, ...(check?.issues.map((i) => i.message) ?? [])])];
  const blocked = !ed || issues.length > 0;
  const basis = resolveBasis(spec);
  const firstStage = (spec.stage ?? 'second') === 'first';
  const boot = spec.bootstrap;
  const autoBlock = check && check.T > 0 ? Math.ceil(Math.cbrt(check.T)) : undefined;

  /** A server issue placed on `name` (shown under that field). */
  const serverMessage = (name: string): string | undefined => {
    const e = get(formState.errors, name) as { type?: string; message?: string } | undefined;
    return e?.type === 'server' ? e.message : undefined;
  };
  const note = (name: (typeof SERVER_FIELDS)[number]) => {
    const m = serverMessage(name);
    return m ? <Text style={styles.fieldError}>{m}</Text> : null;
  };

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

  const setBoot = (patch: Partial<NonNullable<ModelSpecInput['bootstrap']>>) => set('bootstrap', { ...BOOTSTRAP_DEFAULTS, ...(spec.bootstrap ?? {}), ...patch });
  const bootstrapOn = (on: boolean) => {
    if (!on) return set('bootstrap', undefined);
    setBoot({
      draws: wholeOr(bootText.draws),
      seed: wholeOr(bootText.seed),
      ...(bootText.blockLength.trim() ? { blockLength: wholeOr(bootText.blockLength) } : {}),
    });
  };

  /** Keys for this action and content: the same again for a repeat of the same request. */
  const keysFor = (action: SpecFormSubmit['action'], body: unknown): SpecFormSubmit['keys'] => {
    const text = JSON.stringify([action, body]);
    if (lastKeys.current?.body !== text) lastKeys.current = { body: text, keys: { spec: newIdempotencyKey(), run: newIdempotencyKey() } };
    return lastKeys.current.keys;
  };

  const submit = (a: SpecFormSubmit['action']) =>
    handleSubmit(async (v) => {
      if (!ed || pendingAction) return;
      server.clear();
      setPendingAction(a);
      try {
        await onSubmit({ name: v.name, editionId: ed.editionId, spec: v.spec, action: a, keys: keysFor(a, { name: v.name, editionId: ed.editionId, spec: v.spec }) });
      } catch (err) {
        server.onServerError(err);
      } finally {
        setPendingAction(null);
      }
    })();

  const placedOnFields = formState.errors && SERVER_FIELDS.some((f) => serverMessage(f));
  const off = blocked || !!pendingAction || !!busy;

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
              rfChosen.current = false;
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
            onChange={(v) => setEditionNumber(Number(v))}
          />
        ) : null}
        {meta.isPending && editionNumber && libraryId ? <Text style={text.muted}>Loading the edition…</Text> : null}
        {meta.isError ? <ErrorView error={meta.error} title="The edition could not be loaded" /> : null}
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
            {note('spec.assets')}
          </Card>

          <Card title="Factors" subtitle={SPEC_HELP.factors}>
            <View style={styles.wrap} role="group" aria-label="Factors">
              {factorsAvail.map((f) => (
                <Toggle key={f.name} label={f.name} on={(spec.factors ?? []).includes(f.name)} onPress={() => toggleIn('factors', f.name)} hint={`Factor ${f.name}`} />
              ))}
            </View>
            {note('spec.factors')}
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
                {note('spec.nonTraded')}
              </View>
            ) : null}
          </Card>

          <Card title="Returns and window">
            <Select
              label="Risk-free series"
              value={spec.rf ?? '__none'}
              options={[{ value: '__none', label: 'none (assets are excess returns)' }, ...rfAvail.map((r) => ({ value: r, label: `subtract ${r}` }))]}
              onChange={(v) => {
                rfChosen.current = true;
                set('rf', v === '__none' ? undefined : v);
              }}
            />
            <Help>{`${SPEC_HELP.rf} ${ed.riskFree ? `Default: ${ed.riskFree}, this library's risk-free series.` : 'This edition has no risk-free series.'}`}</Help>
            {note('spec.rf')}
            <View style={styles.row}>
              <View style={{ flexGrow: 1, flexBasis: 140 }}>
                <TextField
                  label="Window start"
                  value={spec.window?.start ?? ''}
                  placeholder={ed.firstDate}
                  onChangeText={(v) => set('window', { ...(spec.window ?? {}), start: v.trim() || undefined })}
                />
              </View>
              <View style={{ flexGrow: 1, flexBasis: 140 }}>
                <TextField
                  label="Window end"
                  value={spec.window?.end ?? ''}
                  placeholder={ed.lastDate}
                  onChangeText={(v) => set('window', { ...(spec.window ?? {}), end: v.trim() || undefined })}
                />
              </View>
            </View>
            <Help>{`${SPEC_HELP.window} This edition runs ${ed.firstDate} – ${ed.lastDate} (${ed.T} ${ed.frequency === 'daily' ? 'days' : 'months'}).`}</Help>
            {note('spec.window')}
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
              options={[
                { value: 'identity', label: 'identity' },
                { value: 'second-moment', label: 'second moment' },
                { value: 'covariance', label: 'covariance, W = Cov(R)⁻¹' },
              ]}
              onChange={(v) => set('weighting', v)}
            />
            <Help>{firstStage ? SPEC_HELP.weighting : `${SPEC_HELP.weighting} Used by first-stage runs; this spec is ${spec.stage ?? 'second'} stage.`}</Help>
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
                onChange={(v) => set('lags', v === 'auto' ? 'auto' : /^\d+$/.test(lagText) ? Number(lagText) : 0)}
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
                      // a whole number goes as a number; anything else as the text, so the shared schema names the mistake
                      set('lags', /^\d+$/.test(v.trim()) ? Number(v.trim()) : v);
                    }}
                  />
                </View>
              ) : null}
            </View>
            <Help>{SPEC_HELP.lags}</Help>
            {note('spec.lags')}
            <Select
              label="Significance level"
              value={String(spec.level)}
              options={['0.1', '0.05', '0.01'].map((l) => ({ value: l, label: l }))}
              onChange={(v) => set('level', Number(v))}
            />
            <Help>{SPEC_HELP.level}</Help>
          </Card>

          <Card title="Basis of the verdict" subtitle={SPEC_HELP.basis}>
            <Select
              label="Basis"
              value={spec.basis ?? '__default'}
              options={[
                { value: '__default', label: `default: ${firstStage ? 'robust (first stage)' : `standard (${spec.stage ?? 'second'} stage)`}` },
                { value: 'standard', label: 'standard' },
                { value: 'robust', label: firstStage ? 'robust' : 'robust (first stage only)' },
                { value: 'bootstrap', label: 'bootstrap' },
              ]}
              onChange={(v) => {
                if (v === 'bootstrap' && !spec.bootstrap) bootstrapOn(true);
                set('basis', v === '__default' ? undefined : v);
              }}
            />
            <Text style={text.body} aria-label="Resolved basis">
              The verdicts of this spec rest on the <Text style={text.strong}>{basis}</Text> basis
              {spec.basis ? '.' : ` (the default for ${firstStage ? 'first-stage' : `${spec.stage ?? 'second'}-stage`} runs).`}
            </Text>
            {note('spec.basis')}
            <Toggle label="Bootstrap p-values in the ledger" on={!!boot} onPress={() => bootstrapOn(!boot)} hint="Bootstrap p-values in the ledger" />
            <Help>{SPEC_HELP.bootstrap}</Help>
            {boot ? (
              <View style={{ gap: space.sm }} role="group" aria-label="Bootstrap settings">
                <View style={styles.row}>
                  <View style={{ width: 140 }}>
                    <TextField
                      label="Draws"
                      numeric
                      inputMode="numeric"
                      value={bootText.draws}
                      onChangeText={(v) => {
                        setBootText((b) => ({ ...b, draws: v }));
                        setBoot({ draws: wholeOr(v) });
                      }}
                    />
                  </View>
                  <View style={{ width: 140 }}>
                    <TextField
                      label="Seed"
                      numeric
                      inputMode="numeric"
                      value={bootText.seed}
                      onChangeText={(v) => {
                        setBootText((b) => ({ ...b, seed: v }));
                        setBoot({ seed: wholeOr(v) });
                      }}
                    />
                  </View>
                </View>
                <Select
                  label="Resampling"
                  value={boot.scheme ?? 'iid'}
                  options={[
                    { value: 'iid', label: 'iid periods' },
                    { value: 'block', label: 'blocks of periods' },
                  ]}
                  onChange={(v) => setBoot({ scheme: v })}
                />
                {(boot.scheme ?? 'iid') === 'block' ? (
                  <View style={{ width: 200 }}>
                    <TextField
                      label="Block length"
                      numeric
                      inputMode="numeric"
                      value={bootText.blockLength}
                      placeholder={autoBlock ? `auto: ${autoBlock}` : 'auto'}
                      onChangeText={(v) => {
                        setBootText((b) => ({ ...b, blockLength: v }));
                        const next = { ...BOOTSTRAP_DEFAULTS, ...(spec.bootstrap ?? {}) };
                        if (v.trim()) next.blockLength = wholeOr(v);
                        else delete next.blockLength;
                        set('bootstrap', next);
                      }}
                    />
                  </View>
                ) : null}
                <Help>
                  {`Draws 99 – 10,000; the same seed gives the same p-values.${
                    (boot.scheme ?? 'iid') === 'block'
                      ? ` Blocks keep serial dependence; empty length = ceil(T^(1/3))${autoBlock ? ` = ${autoBlock}` : ''}, at most T/2${check ? ` = ${maxBlockLengthFor(check.T)}` : ''}.`
                      : ''
                  }`}
                </Help>
                {note('spec.bootstrap')}
              </View>
            ) : null}
          </Card>

          {(spec.factors ?? []).length > 0 ? (
            <Card title="Joint drop test (optional)" subtitle={SPEC_HELP.dropSet}>
              <View style={styles.wrap} role="group" aria-label="Joint drop set">
                {(spec.factors ?? []).map((f) => (
                  <Toggle key={f} label={f} on={(spec.dropSet ?? []).includes(f)} onPress={() => toggleIn('dropSet', f)} hint={`Drop set ${f}`} />
                ))}
              </View>
              {note('spec.dropSet')}
            </Card>
          ) : null}

          <Card title="Name and start">
            <View style={styles.counts} aria-label="Model size">
              <Count label="N assets" value={String(check?.N ?? 0)} bad={(check?.N ?? 0) === 0 || (!!check && check.N < check.K)} />
              <Count label="K factors" value={String(check?.K ?? 0)} bad={(check?.K ?? 0) === 0} />
              <Count label="T periods" value={String(check?.T ?? 0)} bad={!!check && check.T <= check.N + check.K} />
              <Count label="df = N − K" value={String(check?.df ?? 0).replace('-', '\u2212')} bad={!!check && check.df < 0} />
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
              <Text style={text.muted}>
                The spec fits this edition. J will have {check?.df} degree{check?.df === 1 ? '' : 's'} of freedom{check?.df === 0 ? ' (exactly identified: J is not a test)' : ''}.
              </Text>
            )}
            <Controller
              control={control}
              name="name"
              render={({ field, fieldState }) => (
                <TextField label="Spec name" value={field.value} onChangeText={field.onChange} onBlur={field.onBlur} error={fieldState.error?.message} placeholder="e.g. Five factors, second stage" />
              )}
            />
            <View style={styles.row}>
              <Button label={`${saveLabel} and run`} variant="primary" busy={pendingAction === 'save-run'} disabled={off} onPress={() => submit('save-run')} />
              <Button label={saveLabel} busy={pendingAction === 'save'} disabled={off} onPress={() => submit('save')} />
              {allowRunOnly ? <Button label="Run without saving" variant="quiet" busy={pendingAction === 'run'} disabled={off} onPress={() => submit('run')} /> : null}
            </View>
            {placedOnFields && !server.general ? (
              <Text style={styles.fieldError} role="alert">
                Keelson refused this spec; the reason is shown at the field above.
              </Text>
            ) : null}
            {server.general ? <ErrorView error={server.general} title="Keelson refused this spec" /> : null}
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
    alignSelf: 'flex-start',
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
  fieldError: { fontFamily: fonts.text, fontSize: 13, color: colors.rust },
});
