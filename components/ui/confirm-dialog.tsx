/**
 * A confirmation asked before an action that cannot be taken back (issue 14): it names the
 * action and says its consequence in words, and acts only on the second, explicit press.
 *
 * Accessibility: react-native-web's Modal renders a `role="dialog"` with `aria-modal`, keeps
 * the keyboard inside it while open, closes on Escape (onRequestClose) and puts the focus
 * back on the control that opened it when it closes; this component labels the dialog by
 * its title and describes it by the consequence. The safe choice (Cancel) comes first, so
 * the focus lands on it and an Enter pressed by habit does nothing irreversible.
 */
import { useId, type ReactNode } from 'react';
import { Modal, ScrollView, View } from 'react-native';
import { colours, radius, space } from '../theme';
import { Button } from './button';
import { Txt } from './text';

/** Props for {@link ConfirmDialog}. */
export interface ConfirmDialogProps {
  /** The question, naming the action: "Close this case with no change?" */
  title: string;
  /** What will happen, in words: who is told, what can no longer change, who can undo it. */
  consequence: string;
  /** The confirming button's label, the action itself ("Close the case"), never just "OK". */
  confirmLabel: string;
  onConfirm(): void;
  onCancel(): void;
  busy?: boolean;
  /** The server's refusal, shown inside the dialog so the person can cancel or try again. */
  error?: string | null;
  /** Extra content between the consequence and the buttons (a reason field, a summary). */
  children?: ReactNode;
  /** 'danger' for a step that ends or withdraws something. */
  kind?: 'primary' | 'danger';
  testID?: string;
}

/** A modal confirmation with its consequence in words; mount it only while it is open. */
export function ConfirmDialog({
  title,
  consequence,
  confirmLabel,
  onConfirm,
  onCancel,
  busy,
  error,
  children,
  kind = 'primary',
  testID = 'confirm-dialog',
}: ConfirmDialogProps) {
  const id = useId().replace(/:/g, '');
  const titleId = `${id}-title`;
  const bodyId = `${id}-body`;
  return (
    <Modal transparent animationType="none" onRequestClose={onCancel} aria-labelledby={titleId} aria-describedby={bodyId}>
      <View style={{ flex: 1, backgroundColor: 'rgba(30, 59, 63, 0.55)', justifyContent: 'center', alignItems: 'center', padding: space.md }}>
        <View
          testID={testID}
          style={{
            width: '100%',
            maxWidth: 520,
            maxHeight: '100%',
            backgroundColor: colours.surface,
            borderRadius: radius.md,
            borderWidth: 1,
            borderColor: colours.line,
          }}
        >
          <ScrollView contentContainerStyle={{ padding: space.lg, gap: space.md }}>
            <Txt variant="title" bold nativeID={titleId} role="heading" aria-level={2} testID={`${testID}-title`}>
              {title}
            </Txt>
            <Txt nativeID={bodyId} testID={`${testID}-consequence`}>
              {consequence}
            </Txt>
            {children}
            {error && (
              <Txt tone="alert" accessibilityRole="alert" testID={`${testID}-error`}>
                {error}
              </Txt>
            )}
            <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.sm, justifyContent: 'flex-end' }}>
              <Button kind="secondary" label="Cancel" onPress={onCancel} testID={`${testID}-cancel`} />
              <Button kind={kind} label={confirmLabel} onPress={onConfirm} busy={busy} testID={`${testID}-confirm`} />
            </View>
          </ScrollView>
        </View>
      </View>
    </Modal>
  );
}
