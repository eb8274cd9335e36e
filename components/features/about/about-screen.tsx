import { Link } from 'expo-router';
import { View } from 'react-native';
import { CAUTIONS } from '../../../shared/cautions';
import { colours, space } from '../../theme';
import { Card } from '../../ui/card';
import { Txt } from '../../ui/text';

/** What Plumbline does, what it must never be taken to do, and the way to the system status (issue 14: no longer a menu entry). */
export function AboutScreen() {
  return (
    <View style={{ gap: space.lg, maxWidth: 760 }}>
      <Txt variant="display" bold accessibilityRole="header">
        About Plumbline
      </Txt>
      <Txt variant="lead">
        Plumbline helps a revenue office decide which filed income-tax returns a person should look at first. It measures how far each return's figures drift
        from the digit patterns that ordinary bookkeeping produces, adds plain rule-based risk factors, and ranks the returns into an examination queue where
        every number can be explained.
      </Txt>
      <Card style={{ borderLeftWidth: 4, borderLeftColor: colours.brass, gap: space.sm }} testID="cautions">
        <Txt variant="title" bold>
          Before you rely on a score
        </Txt>
        {CAUTIONS.map((c) => (
          <View key={c} style={{ flexDirection: 'row', gap: space.sm }}>
            <Txt tone="brass" bold>
              •
            </Txt>
            <Txt style={{ flex: 1 }}>{c}</Txt>
          </View>
        ))}
      </Card>
      <Link href="/status" testID="about-status-link">
        <Txt tone="brass" bold>
          System status: database, scoring queue and outgoing mail →
        </Txt>
      </Link>
      <Txt variant="small" tone="soft">
        Methods: Benford (1938); Hill (1995, Statistical Science); Nigrini (2012, Benford's Law, Wiley); Barney & Schulzke (2016, Journal of Forensic Accounting
        Research). The demo county of Aldermere, its people and figures are invented.
      </Txt>
      <Txt variant="caption" tone="faint">
        Typefaces: Atkinson Hyperlegible and IBM Plex Mono, SIL Open Font License.
      </Txt>
    </View>
  );
}
