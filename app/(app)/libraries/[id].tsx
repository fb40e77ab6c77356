import { router, useLocalSearchParams } from 'expo-router';
import { LibraryDetail } from '../../../components/library-detail';

/** One library on its own page (phones, links, and the wide list's "Open on its own page"). */
export default function LibraryScreen() {
  const params = useLocalSearchParams<{ id: string; edition?: string }>();
  return (
    <LibraryDetail
      id={Number(params.id)}
      edition={params.edition ? Number(params.edition) : undefined}
      onSelectEdition={(k) => router.setParams({ edition: String(k) })}
    />
  );
}
