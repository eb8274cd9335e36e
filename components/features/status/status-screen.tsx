import { Link } from 'expo-router';
import { View } from 'react-native';
import type { HealthCheck } from '../../../shared/health';
import { useHealth } from '../../../hooks/use-health';
import { colours, radius, space } from '../../theme';
import { Card } from '../../ui/card';
import { Txt } from '../../ui/text';
import { useIsWide } from '../../ui/layout';

const LABELS: Record<'database' | 'queue' | 'mail', { title: string; what: string }> = {
  database: { title: 'Database', what: 'Returns, cases and the access log' },
  queue: { title: 'Scoring queue', what: 'Hands new batches to the scoring worker' },
  mail: { title: 'Outgoing mail', what: 'Document-request letters to taxpayers' },
};

function CheckRow({ name, check }: { name: keyof typeof LABELS; check: HealthCheck }) {
  return (
    <Card style={{ flexGrow: 1, flexBasis: 240, gap: space.xs }} testID={`health-${name}`}>
      <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.sm }}>
        <View
          style={{
            paddingHorizontal: space.sm,
            paddingVertical: 2,
            borderRadius: radius.sm,
            backgroundColor: check.ok ? colours.okSoft : colours.alertSoft,
          }}
        >
          <Txt variant="small" bold tone={check.ok ? 'ok' : 'alert'} testID={`health-${name}-state`}>
            {check.ok ? 'Up' : 'Down'}
          </Txt>
        </View>
        <Txt variant="lead" bold>
          {LABELS[name].title}
        </Txt>
      </View>
      <Txt variant="small" tone="soft">
        {LABELS[name].what}
      </Txt>
      <Txt variant="small">{check.detail}</Txt>
      {check.latencyMs !== null && (
        <Txt variant="caption" figures tone="faint">
          {check.latencyMs} ms
        </Txt>
      )}
    </Card>
  );
}

/** Start screen: is everything Plumbline depends on up? */
export function StatusScreen() {
  const health = useHealth();
  const wide = useIsWide();
  return (
    <View style={{ gap: space.lg }}>
      <View style={{ gap: space.xs }}>
        <Txt variant="display" bold accessibilityRole="header">
          System status
        </Txt>
        <Txt tone="soft">What the office's Plumbline needs in order to take in batches, score them and send letters.</Txt>
      </View>
      {health.isPending && <Txt tone="soft">Checking…</Txt>}
      {health.isError && (
        <Card style={{ backgroundColor: colours.alertSoft }}>
          <Txt bold tone="alert">
            The server did not answer.
          </Txt>
          <Txt variant="small">{String(health.error.message)}</Txt>
        </Card>
      )}
      {health.data && (
        <>
          <Txt testID="health-overall" bold tone={health.data.status === 'ok' ? 'ok' : 'alert'}>
            {health.data.status === 'ok' ? 'All services are up.' : 'Some services need attention.'}
          </Txt>
          <View style={{ flexDirection: wide ? 'row' : 'column', gap: space.md, flexWrap: wide ? 'wrap' : 'nowrap' }}>
            <CheckRow name="database" check={health.data.checks.database} />
            <CheckRow name="queue" check={health.data.checks.queue} />
            <CheckRow name="mail" check={health.data.checks.mail} />
          </View>
          <Txt variant="caption" tone="faint" figures>
            version {health.data.version} · checked {new Date(health.data.time).toLocaleTimeString()}
          </Txt>
        </>
      )}
      <Link href="/about">
        <Txt tone="brass" bold>
          About Plumbline and its limits →
        </Txt>
      </Link>
    </View>
  );
}
