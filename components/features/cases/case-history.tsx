/** The case's history as a timeline. */
import { View } from 'react-native';
import type { CaseDetail } from '../../../shared/case-api';
import { colours, space } from '../../theme';
import { Txt } from '../../ui/text';
import { when } from './case-bits';
import { Section } from './case-section';

/** The case's history, newest first. */
export function CaseHistory({ d }: { d: CaseDetail }) {
  return (
    <Section title="History" testID="case-history">
      {[...d.history].reverse().map((h) => (
        <View key={h.id} style={{ flexDirection: 'row', gap: space.sm }}>
          <View style={{ width: 10, alignItems: 'center', paddingTop: 6 }}>
            <View style={{ width: 8, height: 8, borderRadius: 4, backgroundColor: h.kind.includes('assign') ? colours.brass : colours.cord }} />
          </View>
          <View style={{ flex: 1, gap: 0 }}>
            <Txt variant="small">{h.summary}</Txt>
            <Txt variant="caption" figures tone="faint">
              {when(h.at)}
            </Txt>
          </View>
        </View>
      ))}
    </Section>
  );
}
