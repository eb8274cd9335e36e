import { useState } from 'react';
import { Pressable, View } from 'react-native';
import { SavedViewCreateSchema, type SavedViewFilters } from '../../../shared/saved-views';
import { space } from '../../theme';
import { Button } from '../../ui/button';
import { Chip } from '../../ui/choice-row';
import { Field } from '../../ui/field';
import { Txt } from '../../ui/text';
import { useDeleteView, useSaveView, useSavedViews } from './use-my-cases';

/** True when two sets of filters choose the same cases in the same order. */
export function sameFilters(a: SavedViewFilters, b: SavedViewFilters): boolean {
  const keys = new Set([...Object.keys(a), ...Object.keys(b)] as (keyof SavedViewFilters)[]);
  return [...keys].every((k) => (a[k] ?? undefined) === (b[k] ?? undefined));
}

/** Props for {@link SavedViewsBar}. */
export interface SavedViewsBarProps {
  /** The queue's filters and order now, as a view would keep them. */
  current: SavedViewFilters;
  /** Puts the queue on a view's filters (every other filter back to its default). */
  onApply(filters: SavedViewFilters): void;
}

/**
 * The person's saved views as one row of taps at the top of the queue (issue 14), with a way
 * to keep the filters shown now under a name and to delete a view. Views are kept on the
 * server, so they are there again after signing in on any machine.
 */
export function SavedViewsBar({ current, onApply }: SavedViewsBarProps) {
  const views = useSavedViews();
  const save = useSaveView();
  const remove = useDeleteView();
  const [naming, setNaming] = useState(false);
  const [editing, setEditing] = useState(false);
  const [name, setName] = useState('');
  const [error, setError] = useState<string | undefined>();

  const submit = () => {
    const parsed = SavedViewCreateSchema.safeParse({ name, filters: current });
    if (!parsed.success) {
      setError(parsed.error.issues[0]?.message);
      return;
    }
    setError(undefined);
    save.mutate(parsed.data, {
      onSuccess: () => {
        setNaming(false);
        setName('');
      },
      onError: (e) => setError(e.message),
    });
  };

  const items = views.data?.items ?? [];
  return (
    <View style={{ gap: space.sm }} testID="saved-views">
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.xs, alignItems: 'center' }}>
        <Txt variant="small" bold style={{ marginRight: space.xs }}>
          Views
        </Txt>
        {items.map((v) => (
          <View key={v.id} style={{ flexDirection: 'row', alignItems: 'center', gap: 2 }}>
            <Chip label={v.name} on={sameFilters(v.filters, current)} onPress={() => onApply(v.filters)} testID={`saved-view-${v.name}`} />
            {editing && (
              <Pressable
                role="button"
                aria-label={`Delete the view ${v.name}`}
                testID={`saved-view-delete-${v.name}`}
                onPress={() => remove.mutate(v.id)}
                style={{ padding: space.xs }}
              >
                <Txt variant="small" bold tone="alert">
                  ✕
                </Txt>
              </Pressable>
            )}
          </View>
        ))}
        {items.length === 0 && views.data && (
          <Txt variant="small" tone="soft">
            none yet
          </Txt>
        )}
        {!naming && <Chip label="+ Save this view" onPress={() => setNaming(true)} testID="saved-view-new" />}
        {items.length > 0 && (
          <Pressable role="button" onPress={() => setEditing(!editing)} testID="saved-view-edit" style={{ padding: space.xs }}>
            <Txt variant="small" bold tone="brass">
              {editing ? 'Done' : 'Edit'}
            </Txt>
          </Pressable>
        )}
      </View>
      {views.error && (
        <Txt variant="small" tone="alert" accessibilityRole="alert">
          {views.error.message}
        </Txt>
      )}
      {naming && (
        <View style={{ flexDirection: 'row', gap: space.sm, alignItems: 'flex-end', flexWrap: 'wrap' }}>
          <View style={{ flexGrow: 1, flexBasis: 200 }}>
            <Field
              testID="saved-view-name"
              label="Name this view"
              placeholder="e.g. Waiting for replies"
              value={name}
              onChangeText={(t) => {
                setName(t);
                if (error) setError(undefined);
              }}
              onSubmitEditing={submit}
              error={error}
              maxLength={40}
            />
          </View>
          <Button label="Save view" testID="saved-view-save" busy={save.isPending} onPress={submit} />
          <Button
            kind="secondary"
            label="Cancel"
            onPress={() => {
              setNaming(false);
              setError(undefined);
            }}
          />
        </View>
      )}
    </View>
  );
}
