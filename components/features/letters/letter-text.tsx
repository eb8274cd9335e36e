import { ScrollView } from 'react-native';
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
