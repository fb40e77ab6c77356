import { useState } from 'react';
import { ActivityIndicator, Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import { useMe } from '../../../hooks/use-session';
import { useIsWide } from '../../../hooks/use-layout';
import { useLibraries } from '../../../hooks/use-libraries';
import { Button } from '../../../components/button';
import { EmptyState } from '../../../components/empty-state';
import { ErrorView } from '../../../components/error-view';
import { LibraryCard } from '../../../components/library-card';
import { LibraryDetail } from '../../../components/library-detail';
import { Screen } from '../../../components/screen';
import { Select } from '../../../components/select';
import { TextField } from '../../../components/text-field';
import { colors, space, text } from '../../../components/theme';
import type { LibraryListQuery } from '../../../shared/libraries';

type Freq = 'any' | 'monthly' | 'daily';

export default function Libraries() {
  const me = useMe().data;
  const [q, setQ] = useState('');
  const [frequency, setFrequency] = useState<Freq>('any');
  const [scope, setScope] = useState<LibraryListQuery['scope']>('all');
  const [archived, setArchived] = useState<LibraryListQuery['archived']>('hide');
  const [covers, setCovers] = useState('');
  const coversOk = covers === '' || /^\d{4}-\d{2}(-\d{2})?$/.test(covers);
  const query: Partial<LibraryListQuery> = {
    ...(q.trim() ? { q: q.trim() } : {}),
    ...(frequency !== 'any' ? { frequency } : {}),
    ...(scope !== 'all' ? { scope } : {}),
    ...(archived !== 'hide' ? { archived } : {}),
    ...(covers && coversOk ? { covers } : {}),
  };
  const libs = useLibraries(query);
  const canUpload = me?.role === 'researcher' || me?.role === 'admin';
  const wide = useIsWide();
  const [showFilters, setShowFilters] = useState(false);
  const filtersOn = frequency !== 'any' || scope !== 'all' || archived !== 'hide' || covers !== '';
  // Wide: the list beside the chosen library (?open=id; the first one until the user picks).
  const { open } = useLocalSearchParams<{ open?: string }>();
  const openId = libs.data?.some((l) => String(l.id) === open) ? Number(open) : libs.data?.[0]?.id;
  const [edition, setEdition] = useState<{ lib: number; n: number } | null>(null);
  const coversField = (
    <View style={{ flexGrow: 1, flexBasis: 180, maxWidth: 320 }}>
      <TextField
        label="Covers date"
        value={covers}
        onChangeText={setCovers}
        placeholder="YYYY-MM"
        error={coversOk ? undefined : 'Use YYYY-MM or YYYY-MM-DD'}
      />
    </View>
  );

  return (
    <Screen
      title="Return libraries"
      subtitle="Dated tables of test-asset, factor and risk-free series, versioned as editions."
      actions={canUpload ? <Button variant="primary" label="Upload a library" href="/libraries/upload" /> : null}
      fullWidth={wide}
    >
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'flex-start' }}>
        <View style={{ flexGrow: 2, flexBasis: 260 }}>
          <TextField label="Search libraries" value={q} onChangeText={setQ} placeholder="Name or description" />
        </View>
        {wide ? coversField : null}
        {!wide ? (
          <Button
            compact
            variant="quiet"
            label={showFilters ? 'Hide filters' : `Filters${filtersOn ? ' (on)' : ''}`}
            onPress={() => setShowFilters((v) => !v)}
          />
        ) : null}
      </View>
      {wide || showFilters ? (
      <>
      {wide ? null : (
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'flex-start' }}>
        {coversField}
      </View>
      )}
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.lg }}>
        <Select<Freq>
          label="Frequency"
          value={frequency}
          onChange={setFrequency}
          options={[
            { value: 'any', label: 'Any' },
            { value: 'monthly', label: 'Monthly' },
            { value: 'daily', label: 'Daily' },
          ]}
        />
        {me?.role === 'researcher' || me?.role === 'admin' ? (
          <Select<LibraryListQuery['scope']>
            label="Show"
            value={scope}
            onChange={setScope}
            options={[
              { value: 'all', label: 'All I can read' },
              { value: 'shared', label: 'Shared' },
              { value: 'mine', label: 'My private' },
            ]}
          />
        ) : null}
        <Select<LibraryListQuery['archived']>
          label="Archived"
          value={archived}
          onChange={setArchived}
          options={[
            { value: 'hide', label: 'Hide' },
            { value: 'include', label: 'Include' },
            { value: 'only', label: 'Only archived' },
          ]}
        />
      </View>
      </>
      ) : null}
      {libs.isPending ? (
        <ActivityIndicator color={colors.brass} accessibilityLabel="Loading libraries" />
      ) : libs.isError ? (
        <ErrorView error={libs.error} title="Libraries could not be loaded" onRetry={() => void libs.refetch()} />
      ) : libs.data.length === 0 ? (
        <EmptyState
          title={Object.keys(query).length ? 'No library matches' : 'No libraries yet'}
          body={canUpload ? 'Upload a CSV with a date column and one column per series.' : 'Shared libraries appear here once an admin publishes one.'}
        />
      ) : (
        <View style={wide ? { flexDirection: 'row', gap: space.lg, alignItems: 'flex-start' } : undefined}>
          <View style={[{ gap: space.sm }, wide && { width: 340, flexShrink: 0 }]}>
            <Text style={text.muted}>
              {libs.data.length} librar{libs.data.length === 1 ? 'y' : 'ies'}
              {wide ? ' · pick one to see it beside the list' : ''}
            </Text>
            <View role="list" aria-label="Libraries" style={wide ? { gap: space.sm } : { flexDirection: 'row', flexWrap: 'wrap', gap: space.md }}>
              {libs.data.map((l) => (
                <View role="listitem" key={l.id} style={wide ? undefined : { flexGrow: 1, flexBasis: 300, maxWidth: '100%' }}>
                  {wide ? (
                    <LibraryCard lib={l} selected={l.id === openId} onSelect={() => router.setParams({ open: String(l.id) })} />
                  ) : (
                    <LibraryCard lib={l} />
                  )}
                </View>
              ))}
            </View>
          </View>
          {wide && openId !== undefined ? (
            <View style={{ flex: 1, minWidth: 0 }}>
              <LibraryDetail
                key={openId}
                id={openId}
                embedded
                edition={edition?.lib === openId ? edition.n : undefined}
                onSelectEdition={(n) => setEdition({ lib: openId, n })}
              />
            </View>
          ) : null}
        </View>
      )}
    </Screen>
  );
}
