import * as DocumentPicker from 'expo-document-picker';
import { createElement, useRef } from 'react';
import { Platform, View } from 'react-native';
import { Button } from '../../ui/button';
import type { PickedFile } from './upload-batch';

/** Props for {@link FilePicker}. */
export interface FilePickerProps {
  onPick(files: PickedFile[]): void;
  disabled?: boolean;
  testID?: string;
}

const ACCEPT = '.xlsx,.csv,text/csv,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

/**
 * Chooses the batch files: on the web a plain `<input type="file" multiple>` behind a
 * button (the browser's own dialog, no upload library); on a phone the system document
 * picker.
 */
export function FilePicker({ onPick, disabled, testID }: FilePickerProps) {
  const input = useRef<HTMLInputElement | null>(null);
  if (Platform.OS === 'web') {
    return (
      <View>
        {createElement('input', {
          ref: input,
          type: 'file',
          multiple: true,
          accept: ACCEPT,
          'data-testid': testID,
          'aria-label': 'Batch files',
          style: { display: 'none' },
          onChange: (e: { target: HTMLInputElement }) => {
            const list = Array.from(e.target.files ?? []);
            onPick(list.map((f) => ({ name: f.name, size: f.size, file: f })));
            e.target.value = ''; // choosing the same file again still fires
          },
        })}
        <Button
          kind="secondary"
          label="Choose files…"
          disabled={disabled}
          onPress={() => input.current?.click()}
          testID={testID ? `${testID}-button` : undefined}
        />
      </View>
    );
  }
  return (
    <Button
      kind="secondary"
      label="Choose files…"
      disabled={disabled}
      testID={testID ? `${testID}-button` : undefined}
      onPress={async () => {
        const r = await DocumentPicker.getDocumentAsync({
          multiple: true,
          copyToCacheDirectory: true,
          type: ['text/csv', 'text/comma-separated-values', 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'],
        });
        if (r.canceled) return;
        onPick(r.assets.map((a) => ({ name: a.name, size: a.size ?? 0, uri: a.uri, mimeType: a.mimeType })));
      }}
    />
  );
}
