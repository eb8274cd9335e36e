/** The notes on a case and the form that adds one. */
import { zodResolver } from '@hookform/resolvers/zod';
import { useForm } from 'react-hook-form';
import { View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { NoteRequestSchema, type NoteRequest } from '../../../shared/cases';
import { colours, space } from '../../theme';
import { Button } from '../../ui/button';
import { FormField } from '../../ui/form-field';
import { Txt } from '../../ui/text';
import { when } from './case-bits';
import { Section } from './case-section';
import { useAddNote } from './use-cases';

/** The case's notes, oldest first, and the form to add one (notes cannot be edited later). */
export function CaseNotes({ d }: { d: CaseDetail }) {
  const add = useAddNote(d.id);
  const form = useForm<NoteRequest>({ resolver: zodResolver(NoteRequestSchema), defaultValues: { text: '' } });
  const submit = form.handleSubmit((v) => add.mutate(v.text, { onSuccess: () => form.reset({ text: '' }) }));
  return (
    <Section
      title="Notes"
      testID="case-notes"
      right={
        <Txt variant="small" tone="soft">
          {d.notes.length ? `${d.notes.length}` : ''}
        </Txt>
      }
    >
      {d.notes.length === 0 && <Txt tone="soft">No notes yet.</Txt>}
      {d.notes.map((n) => (
        <View key={n.id} style={{ gap: 2, paddingBottom: space.sm, borderBottomWidth: 1, borderBottomColor: colours.line }} testID={`note-item-${n.id}`}>
          <Txt variant="small" tone="soft">
            <Txt variant="small" bold>
              {n.authorName}
            </Txt>{' '}
            ·{' '}
            <Txt variant="small" figures tone="soft">
              {when(n.at)}
            </Txt>
          </Txt>
          <Txt>{n.text}</Txt>
        </View>
      ))}
      {d.actions.note ? (
        <View style={{ gap: space.sm }}>
          <FormField
            control={form.control}
            name="text"
            testID="note-text"
            label="Add a note"
            multiline
            numberOfLines={3}
            style={{ minHeight: 76, textAlignVertical: 'top' }}
            hint="Notes are kept with the case as written: they cannot be edited or removed later."
          />
          {add.error && (
            <Txt tone="alert" accessibilityRole="alert">
              {add.error.message}
            </Txt>
          )}
          <Button kind="secondary" label="Add note" testID="note-submit" busy={add.isPending} onPress={submit} style={{ alignSelf: 'flex-start' }} />
        </View>
      ) : (
        <Txt variant="small" tone="soft">
          Only the case&apos;s examiner or a supervisor can add notes.
        </Txt>
      )}
    </Section>
  );
}
