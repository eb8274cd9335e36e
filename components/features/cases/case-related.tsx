/**
 * Related cases on the case screen (issue 14): the taxpayer's other returns on file, each with
 * the case opened on it and how that ended, and the other cases opened on returns the same
 * preparer filed in this batch. A year worked as an unrelated case, or a preparer's other
 * clients, are then one press away.
 */
import { Link } from 'expo-router';
import { Pressable, View } from 'react-native';
import type { CaseDetail, PreparerCase, RelatedReturn } from '../../../shared/case-api';
import { colours, space } from '../../theme';
import { Txt } from '../../ui/text';
import { amount, StateBadge, when } from './case-bits';
import { Section } from './case-section';

function CaseLink({ caseId, children, testID }: { caseId: string; children: string; testID: string }) {
  return (
    <Link href={{ pathname: '/cases/[id]', params: { id: caseId } }} asChild>
      <Pressable role="link" testID={testID}>
        <Txt bold figures tone="brass" style={{ textDecorationLine: 'underline' }}>
          {children}
        </Txt>
      </Pressable>
    </Link>
  );
}

const row = {
  flexDirection: 'row',
  flexWrap: 'wrap',
  alignItems: 'center',
  gap: space.sm,
  paddingVertical: space.sm,
  borderTopWidth: 1,
  borderTopColor: colours.line,
} as const;

function OtherReturn({ r }: { r: RelatedReturn }) {
  return (
    <View style={{ ...row, flexDirection: 'column', alignItems: 'stretch', gap: 2 }} testID={`related-return-${r.returnRef}`}>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', alignItems: 'center', gap: space.sm }}>
        <Txt figures tone="soft">
          {String(r.taxYear)}
        </Txt>
        {r.caseId ? (
          <CaseLink caseId={r.caseId} testID={`related-case-${r.returnRef}`}>
            {r.returnRef}
          </CaseLink>
        ) : (
          <Txt figures>{r.returnRef}</Txt>
        )}
        {r.state ? (
          <StateBadge state={r.state} />
        ) : (
          <Txt variant="small" tone="soft">
            Not selected for a case
          </Txt>
        )}
        {r.superseded && (
          <Txt variant="small" tone="soft">
            replaced by an amended return
          </Txt>
        )}
      </View>
      {(r.outcome || r.adjustedAmount || r.finishedAt) && (
        <Txt variant="small" tone="soft">
          {[
            r.outcome,
            r.adjustedAmount ? `adjusted amount ${amount(r.adjustedAmount)}` : null,
            r.finishedAt ? `finished ${when(r.finishedAt).slice(0, 10)}` : null,
          ]
            .filter(Boolean)
            .join(' · ')}
        </Txt>
      )}
    </View>
  );
}

function PreparerRow({ c }: { c: PreparerCase }) {
  return (
    <View style={row} testID={`related-preparer-${c.returnRef}`}>
      <CaseLink caseId={c.caseId} testID={`related-preparer-case-${c.returnRef}`}>
        {c.returnRef}
      </CaseLink>
      <Txt variant="small" style={{ flexShrink: 1 }}>
        {c.taxpayerName}
      </Txt>
      <StateBadge state={c.state} />
    </View>
  );
}

/** The case's related returns and cases (from GET /api/cases/:id's `related`). */
export function CaseRelated({ d }: { d: CaseDetail }) {
  const rel = d.related;
  if (!rel) return null;
  const p = rel.preparer;
  return (
    <Section title="Related cases" testID="case-related">
      <View style={{ gap: 0 }}>
        <Txt bold>This taxpayer&apos;s other returns</Txt>
        {rel.taxpayerReturns.length === 0 ? (
          <Txt variant="small" tone="soft" testID="related-returns-none">
            No other return of {d.taxpayer.name} is on file.
          </Txt>
        ) : (
          rel.taxpayerReturns.map((r) => <OtherReturn key={r.returnId} r={r} />)
        )}
      </View>
      <View style={{ gap: 0 }}>
        <Txt bold>{p ? `Preparer ${p.code}: other selected returns in this batch` : 'Preparer'}</Txt>
        {!p && (
          <Txt variant="small" tone="soft">
            Self-prepared return.
          </Txt>
        )}
        {p && p.total === 0 && (
          <Txt variant="small" tone="soft" testID="related-preparer-none">
            No other return this preparer filed in the batch was selected.
          </Txt>
        )}
        {p?.cases.map((c) => (
          <PreparerRow key={c.caseId} c={c} />
        ))}
        {p && p.total > p.cases.length && (
          <Txt variant="small" tone="soft">
            And {p.total - p.cases.length} more, lower in priority.
          </Txt>
        )}
      </View>
    </Section>
  );
}
