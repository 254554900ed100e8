// Files attached to a record (a run, a calibration): listed for download, and a button that uploads a photo or a
// PDF. The server checks the type from the content and limits the size; its refusal is shown here as it says it.
import { useState } from 'react';
import { Platform, StyleSheet, View } from 'react-native';
import { space } from '../../theme/tokens';
import type { Attachment } from '../../../shared/schemas/desk';
import { Button, Card, Text } from '../../ui';
import { downloadFile, uploadFile } from './transfer';

const ACCEPT = 'image/png,image/jpeg,image/webp,image/heic,application/pdf';

export function FilesCard({
  title = 'Attachments',
  files,
  uploadPath,
  canAttach,
  onUploaded,
  empty = 'No files attached.',
  attachLabel = 'Attach a photo or PDF',
  testID = 'attachments',
  inside = false,
}: {
  title?: string;
  files: readonly Attachment[];
  uploadPath: string;
  canAttach: boolean;
  onUploaded(): Promise<unknown> | void;
  empty?: string;
  attachLabel?: string;
  testID?: string;
  /** Drawn as a section of an enclosing card instead of a card of its own. */
  inside?: boolean;
}) {
  const [err, setErr] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const pick = () => {
    if (Platform.OS !== 'web' || typeof document === 'undefined') return;
    const input = document.createElement('input');
    input.type = 'file';
    input.accept = ACCEPT;
    input.onchange = async () => {
      const f = input.files?.[0];
      if (!f) return;
      setErr(null);
      setBusy(true);
      try {
        await uploadFile(uploadPath, f);
        await onUploaded();
      } catch (e) {
        setErr((e as Error).message);
      } finally {
        setBusy(false);
      }
    };
    input.click();
  };
  const download = async (f: Attachment) => {
    setErr(null);
    try {
      await downloadFile(`/attachments/${f.id}`, f.originalName);
    } catch (e) {
      setErr((e as Error).message);
    }
  };
  const body = (
    <>
      {files.map((f) => (
        <Button key={f.id} kind="quiet" label={`${f.originalName} (${Math.ceil(f.sizeBytes / 1024)} KB, ${f.uploadedByName})`} onPress={() => void download(f)} testID={`attachment-${f.originalName}`} />
      ))}
      {!files.length && <Text tone="muted">{empty}</Text>}
      {canAttach && <Button label={attachLabel} kind="secondary" busy={busy} onPress={pick} testID="attach-file" />}
      {err && <Text tone="danger" testID="attach-error">{err}</Text>}
    </>
  );
  if (!inside) return <Card title={title} testID={testID}>{body}</Card>;
  return (
    <View style={styles.section} testID={testID}>
      <Text variant="label">{title}</Text>
      {body}
    </View>
  );
}

const styles = StyleSheet.create({ section: { gap: space.xs, alignItems: 'flex-start' } });
