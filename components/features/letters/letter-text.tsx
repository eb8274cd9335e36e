import { ScrollView, View } from 'react-native';
import type { LetterPreview } from '../../../shared/letters';
import { colours, radius, space } from '../../theme';
import { Txt } from '../../ui/text';

/**
 * A letter's text in a preview, scrolling inside a frame of its own. The frame takes keyboard
 * focus (WCAG 2.1.1: a scrolling region must be reachable without a mouse) and is named for
 * screen readers.
 */
export function LetterText({ text, testID }: { text: string; testID: string }) {
  return (
    <ScrollView style={{ maxHeight: 320 }} nestedScrollEnabled tabIndex={0} aria-label="The letter's text">
      <Txt variant="small" style={{ whiteSpace: 'pre-wrap' } as object} testID={testID}>
        {text}
      </Txt>
    </ScrollView>
  );
}

/**
 * A letter (or memo) as it will be sent, read before anything is stored or sent: where it
 * goes, its subject and its text. `partsID` names the recipient line (`<partsID>-to`) and the
 * text (`<partsID>-text`); it defaults to `testID`.
 */
export function LetterPreviewBox({ preview, testID, partsID = testID }: { preview: LetterPreview; testID: string; partsID?: string }) {
  return (
    <View style={{ gap: space.xs, padding: space.md, borderWidth: 1, borderColor: colours.line, borderRadius: radius.md }} testID={testID}>
      <Txt variant="small" bold>
        {preview.kind === 'referral_memo' ? 'The memo as it will be written' : 'The letter as it will be sent'}
      </Txt>
      <Txt variant="small" tone="soft" testID={`${partsID}-to`}>
        {preview.kind === 'referral_memo'
          ? 'Kept with the case for the unit; its PDF also charts the return’s first digits'
          : preview.to
            ? `By e-mail to ${preview.to}, with the PDF attached`
            : 'No e-mail address on file: kept with the case for post'}
      </Txt>
      <Txt variant="small" bold>
        {preview.subject}
      </Txt>
      <LetterText text={preview.text} testID={`${partsID}-text`} />
    </View>
  );
}
