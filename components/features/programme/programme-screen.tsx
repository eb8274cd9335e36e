/**
 * The supervisor's Programme screen (issue 17, docs/methods.md#programme-outcomes): is the
 * selection finding anything, how much, against returns chosen at random; by score decile,
 * factor, examiner and batch; and cases finished per week. Every figure carries its 95 %
 * interval and the method's name; a figure resting on too few closed cases is shown as
 * "not enough closed cases yet", never as a bar.
 */
import { View } from 'react-native';
import type { Comparison, GroupOutcome, IntervalDto } from '../../../shared/programme/api';
import { colours, radius, space } from '../../theme';
import { Card } from '../../ui/card';
import { useIsWide } from '../../ui/layout';
import { HeaderLabel } from '../../ui/table-header-row';
import { Txt } from '../../ui/text';
import { IntervalChart } from './interval-chart';
import { TrendChart } from './trend-chart';
import { useOutcomes } from './use-programme';

const SERIES = [
  { name: 'Selected by score', colour: colours.cord },
  { name: 'Chosen at random', colour: colours.brass },
];
const THIN = 'not enough closed cases yet';
const pct = (v: number) => `${Math.round(v * 1000) / 10}%`;
const money = (v: number) => v.toLocaleString('en-US', { minimumFractionDigits: 2, maximumFractionDigits: 2 });

/** A figure with its interval, "estimate (low to high)", each written by `fmt`; or THIN. */
const intervalText =
  (fmt: (v: number) => string, prefix = '') =>
  (v: IntervalDto): string =>
    v.enoughData && v.estimate !== null ? `${prefix}${fmt(v.estimate)} (${fmt(v.low!)} to ${fmt(v.high!)})` : THIN;
const rateText = intervalText(pct);
const amountText = intervalText(money);
const liftText = intervalText((v) => v.toFixed(2), '× ');

function Figure({ label, value, note }: { label: string; value: string; note?: string }) {
  const thin = value === THIN;
  return (
    <View style={{ gap: 2, minWidth: 200, flex: 1 }}>
      <HeaderLabel>{label}</HeaderLabel>
      <Txt figures={!thin} bold={!thin} tone={thin ? 'soft' : 'ink'} variant={thin ? 'small' : 'lead'}>
        {thin ? 'Not enough closed cases yet' : value}
      </Txt>
      {note && (
        <Txt variant="caption" tone="soft">
          {note}
        </Txt>
      )}
    </View>
  );
}

function GroupFigures({ title, g }: { title: string; g: GroupOutcome }) {
  return (
    <View style={{ gap: space.sm, flex: 1, minWidth: 260 }}>
      <Txt bold>{title}</Txt>
      <Txt variant="small" tone="soft">
        {g.closed} closed ({g.adjusted} adjusted){g.referred ? `, ${g.referred} referred (not in the rate)` : ''}
      </Txt>
      <Figure label="Adjustment rate" value={rateText(g.rate)} />
      <Figure label="Mean adjusted amount" value={amountText(g.meanAdjusted)} />
    </View>
  );
}

function Overall({ c }: { c: Comparison }) {
  return (
    <Card style={{ gap: space.md }} testID="programme-overall">
      <Txt variant="title" bold accessibilityRole="header" aria-level={2}>
        Selected against random
      </Txt>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', columnGap: space.lg, rowGap: space.lg }}>
        <GroupFigures title="Selected by score" g={c.selected} />
        <GroupFigures title="Chosen at random" g={c.random} />
        <View style={{ gap: space.sm, flex: 1, minWidth: 260 }}>
          <Txt bold>Lift (selected ÷ random)</Txt>
          <Figure label="Of the adjustment rate" value={liftText(c.rateLift)} />
          <Figure label="Of the mean adjusted amount" value={liftText(c.amountLift)} />
        </View>
      </View>
    </Card>
  );
}

function Table({ title, head, rows, testID }: { title: string; head: string[]; rows: string[][]; testID?: string }) {
  const wide = useIsWide();
  return (
    <Card style={{ gap: space.sm }} testID={testID}>
      <Txt variant="title" bold accessibilityRole="header" aria-level={2}>
        {title}
      </Txt>
      {rows.length === 0 && <Txt tone="soft">Nothing finished yet.</Txt>}
      {wide && rows.length > 0 && (
        <View style={{ flexDirection: 'row', gap: space.md, borderBottomWidth: 1.5, borderBottomColor: colours.ink, paddingBottom: space.xs }}>
          {head.map((h, i) => (
            <View key={h} style={{ flex: i === 0 ? 2 : 1.3 }}>
              <HeaderLabel>{h}</HeaderLabel>
            </View>
          ))}
        </View>
      )}
      {rows.map((r, ri) =>
        wide ? (
          <View key={ri} style={{ flexDirection: 'row', gap: space.md, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colours.line }}>
            {r.map((cell, i) => (
              <View key={i} style={{ flex: i === 0 ? 2 : 1.3 }}>
                <Txt variant="small" figures={i > 0 && cell !== THIN} tone={cell === THIN ? 'soft' : 'ink'}>
                  {cell}
                </Txt>
              </View>
            ))}
          </View>
        ) : (
          <View key={ri} style={{ gap: 2, paddingVertical: space.xs, borderBottomWidth: 1, borderBottomColor: colours.line }}>
            <Txt bold>{r[0]}</Txt>
            {r.slice(1).map((cell, i) => (
              <Txt key={i} variant="small" tone={cell === THIN ? 'soft' : 'ink'}>
                {head[i + 1]}: {cell}
              </Txt>
            ))}
          </View>
        ),
      )}
    </Card>
  );
}

/** The Programme screen. */
export function ProgrammeScreen() {
  const o = useOutcomes();
  const d = o.data;
  return (
    <View style={{ gap: space.lg }}>
      <View style={{ gap: space.xs }}>
        <Txt variant="display" bold accessibilityRole="header">
          Programme
        </Txt>
        <Txt tone="soft">
          Is the selection finding anything, and how much? Outcomes of finished cases chosen by score, against cases chosen at random from the returns below the
          cut. Scores select returns for a human look and prove nothing by themselves.
        </Txt>
      </View>
      {o.error && (
        <Txt tone="alert" accessibilityRole="alert">
          {o.error.message}
        </Txt>
      )}
      {o.isPending && <Txt tone="soft">Counting…</Txt>}
      {d && (
        <>
          <Card style={{ borderLeftWidth: 4, borderLeftColor: colours.brass, gap: 2 }} testID="programme-open-random">
            <Txt>
              <Txt figures bold variant="title">
                {d.openRandom.toLocaleString('en-US')}
              </Txt>{' '}
              random review case{d.openRandom === 1 ? '' : 's'} still open
            </Txt>
            <Txt variant="caption" tone="soft">
              They measure what the score passes over only once they are worked to an outcome like any other case.
            </Txt>
          </Card>
          <Overall c={d.overall} />
          <Card style={{ gap: space.lg }}>
            <IntervalChart
              testID="programme-chart-overall"
              title="Adjustment rate: selected and random"
              series={[{ name: 'Rate', colour: colours.cord }]}
              categories={[
                { label: 'Selected', values: [d.overall.selected.rate] },
                { label: 'Random', values: [d.overall.random.rate] },
              ]}
            />
            <IntervalChart
              testID="programme-chart-deciles"
              title="Adjustment rate by score decile"
              caption="Deciles of each batch's scored returns, 1 the lowest tenth, 10 the highest."
              series={SERIES}
              categories={d.byDecile.map((x) => ({ label: String(x.decile), values: [x.selected.rate, x.random.rate] }))}
            />
            <TrendChart testID="programme-chart-weekly" weeks={d.weekly} />
          </Card>
          <Table
            testID="programme-by-factor"
            title="By factor (selected cases where it added points)"
            head={['Factor', 'Closed', 'Adjustment rate', 'Mean adjusted amount']}
            rows={d.byFactor.map((f) => [f.label, String(f.outcome.closed), rateText(f.outcome.rate), amountText(f.outcome.meanAdjusted)])}
          />
          <Table
            testID="programme-by-examiner"
            title="By examiner"
            head={['Examiner', 'Finished per week', 'Rate, selected', 'Rate, random']}
            rows={d.byExaminer.map((e) => [e.name, e.closuresPerWeek.toFixed(1), rateText(e.comparison.selected.rate), rateText(e.comparison.random.rate)])}
          />
          <Table
            testID="programme-by-batch"
            title="By batch"
            head={['Batch', 'Rate, selected', 'Rate, random', 'Lift of the rate']}
            rows={d.byBatch.map((b) => [b.label, rateText(b.comparison.selected.rate), rateText(b.comparison.random.rate), liftText(b.comparison.rateLift)])}
          />
          <View style={{ gap: space.xs, padding: space.md, borderRadius: radius.md, backgroundColor: colours.neutralSoft }} testID="programme-methods">
            <Txt bold>How these figures are computed</Txt>
            <Txt variant="small">
              Rates: {d.overall.selected.rate.method}. Mean adjusted amounts: {d.overall.selected.meanAdjusted.method}. Lift of the rate:{' '}
              {d.overall.rateLift.method}. Lift of the amount: {d.overall.amountLift.method}. All intervals are 95 %.
            </Txt>
            <Txt variant="small">
              A figure resting on fewer than {d.minClosed} closed cases, or whose interval is too wide to say anything, is shown as “not enough closed cases
              yet”. Referred cases are finished but have no adjustment outcome yet, so they are not in the rates.
            </Txt>
          </View>
        </>
      )}
    </View>
  );
}
