import { useState } from 'react';
import { ActivityIndicator, Text, View } from 'react-native';
import { router, useLocalSearchParams } from 'expo-router';
import { useMe } from '../../../hooks/use-session';
import { useConfirmUpload, useDiscardUpload, useLibrary, useUploadFile } from '../../../hooks/use-libraries';
import { Button } from '../../../components/button';
import { Card } from '../../../components/card';
import { ErrorView } from '../../../components/error-view';
import { LibraryFileInput } from '../../../components/library-file-input';
import { LibraryReview } from '../../../components/library-review';
import { RoleGate } from '../../../components/role-gate';
import { Screen } from '../../../components/screen';
import { colors, space, text } from '../../../components/theme';
import type { Upload } from '../../../shared/libraries';

export default function UploadLibrary() {
  return (
    <RoleGate roles={['admin', 'researcher']} title="Upload a library">
      <UploadFlow />
    </RoleGate>
  );
}

function UploadFlow() {
  const me = useMe().data;
  const params = useLocalSearchParams<{ libraryId?: string }>();
  const libraryId = params.libraryId ? Number(params.libraryId) : undefined;
  const target = useLibrary(libraryId);
  const [upload, setUpload] = useState<Upload | null>(null);
  const send = useUploadFile();
  const confirm = useConfirmUpload();
  const discard = useDiscardUpload();

  const title = libraryId ? (target.data ? `New edition of ${target.data.name}` : 'New edition') : 'Upload a library';
  return (
    <Screen title={title} subtitle="Pick a CSV, review what Keelson read, choose each series' kind, then confirm.">
      {libraryId && target.isError ? <ErrorView error={target.error} title="That library could not be loaded" /> : null}
      {!upload ? (
        <Card title="1 · Pick a CSV file">
          <LibraryFileInput disabled={send.isPending} onPick={(file) => send.mutate({ file, name: file.name, libraryId }, { onSuccess: setUpload })} />
          {send.isPending ? (
            <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'center' }}>
              <ActivityIndicator color={colors.brass} />
              <Text style={text.body}>Reading and checking the file…</Text>
            </View>
          ) : null}
          {send.isError ? <ErrorView error={send.error} title="The file was refused; nothing was saved" /> : null}
        </Card>
      ) : (
        <LibraryReview
          key={target.data?.id ?? 'new'}
          upload={upload}
          target={target.data ? { id: target.data.id, name: target.data.name, visibility: target.data.visibility } : undefined}
          canShare={me?.role === 'admin'}
          busy={confirm.isPending}
          onConfirm={(body) =>
            confirm
              .mutateAsync({ id: upload.id, body })
              .then((r) => router.replace({ pathname: '/libraries/[id]', params: { id: String(r.library.id), edition: String(r.edition.number) } }))
          }
          onDiscard={() => {
            discard.mutate(upload.id);
            setUpload(null);
            send.reset();
            confirm.reset();
          }}
        />
      )}
      <Button variant="quiet" label="Back to libraries" href={libraryId ? `/libraries/${libraryId}` : '/libraries'} />
    </Screen>
  );
}
