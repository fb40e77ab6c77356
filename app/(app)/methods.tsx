import { ActivityIndicator } from 'react-native';
import { useMethodsDoc } from '../../hooks/use-docs';
import { Screen } from '../../components/screen';
import { ErrorView } from '../../components/error-view';
import { MethodsDoc, docTitle } from '../../components/methods-doc';
import { colors } from '../../components/theme';

/** Methods: the statistics behind every number (docs/methods.md, served by the API), read-only. */
export default function Methods() {
  const q = useMethodsDoc();
  return (
    <Screen title={(q.data && docTitle(q.data)) ?? 'Methods'} subtitle="Every estimator, formula and source behind the numbers Keelson shows.">
      {q.isPending ? <ActivityIndicator color={colors.brass} accessibilityLabel="Loading the methods page" /> : null}
      {q.isError ? <ErrorView error={q.error} title="The methods page could not be loaded" onRetry={() => void q.refetch()} /> : null}
      {q.data ? <MethodsDoc markdown={q.data} /> : null}
    </Screen>
  );
}
