/**
 * Rates with their 95 % intervals as bars with whiskers, one group of bars per category and one
 * bar per series; drawn with react-native-svg in the chart frame the digit chart uses
 * (components/ui/chart-parts.tsx), same colours, type and measuring. A figure without enough
 * closed cases gets no bar: a short dash on the axis and the words in the text alternative and
 * the legend.
 */
import Svg, { G, Line, Rect, Text as SvgText } from 'react-native-svg';
import type { IntervalDto } from '../../../shared/programme/api';
import { colours, fonts } from '../../theme';
import { ChartFrame, ChartGrid, LegendItem } from '../../ui/chart-parts';
import { Txt } from '../../ui/text';

/** One series: its name and colour. */
export interface ChartSeries {
  name: string;
  colour: string;
}

/** Props for {@link IntervalChart}. */
export interface IntervalChartProps {
  title: string;
  caption?: string;
  series: readonly ChartSeries[];
  /** Per category, one interval per series (same order). */
  categories: readonly { label: string; values: readonly IntervalDto[] }[];
  testID?: string;
}

const HEIGHT = 220;
const PAD = { left: 40, right: 10, top: 12, bottom: 28 };
const pct = (v: number) => `${Math.round(v * 100)}%`;

/** Text for one figure, for the chart's text alternative. */
export function describeRate(v: IntervalDto): string {
  if (!v.enoughData || v.estimate === null) return 'not enough closed cases yet';
  return `${pct(v.estimate)} (95 % interval ${pct(v.low!)} to ${pct(v.high!)})`;
}

/** Bars with interval whiskers; thin figures shown as "not enough closed cases yet". */
export function IntervalChart({ title, caption, series, categories, testID }: IntervalChartProps) {
  const shown = categories.flatMap((c) => c.values.filter((v) => v.enoughData && v.high !== null).map((v) => v.high!));
  const top = Math.max(0.2, Math.min(1, Math.ceil((Math.max(0, ...shown) + 0.02) * 10) / 10));
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const y = (v: number) => PAD.top + plotH * (1 - Math.min(v, top) / top);
  const ticks = Array.from({ length: Math.round(top * 10) + 1 }, (_, k) => k / 10).filter((t, k, all) => all.length <= 6 || k % 2 === 0);
  const summary = `${title}. ` + categories.map((c) => `${c.label}: ` + c.values.map((v, i) => `${series[i].name} ${describeRate(v)}`).join(', ')).join('; ');
  const thin = categories.some((c) => c.values.some((v) => !v.enoughData));
  const legend = (
    <>
      {series.map((s) => (
        <LegendItem key={s.name} swatch={{ backgroundColor: s.colour, opacity: 0.85 }}>
          {s.name}
        </LegendItem>
      ))}
      <Txt variant="caption" tone="soft">
        Whiskers: 95 % interval.{thin ? ' A dashed mark on the axis: not enough closed cases yet.' : ''}
      </Txt>
    </>
  );

  return (
    <ChartFrame title={title} caption={caption} summary={summary} legend={legend} testID={testID}>
      {(width) => {
        const plotW = Math.max(100, width - PAD.left - PAD.right);
        const slot = plotW / Math.max(1, categories.length);
        const bw = Math.min(26, (slot * 0.7) / series.length);
        return (
          <Svg width={width} height={HEIGHT}>
            <ChartGrid ticks={ticks} y={y} left={PAD.left} width={plotW} label={pct} />
            {categories.map((c, ci) => {
              const cx = PAD.left + slot * ci + slot / 2;
              return (
                <G key={c.label}>
                  {c.values.map((v, si) => {
                    const x = cx - (bw * series.length) / 2 + bw * si + bw / 2;
                    if (!v.enoughData || v.estimate === null || v.low === null || v.high === null) {
                      return (
                        <Line
                          key={si}
                          x1={x - bw * 0.3}
                          x2={x + bw * 0.3}
                          y1={y(0) - 3}
                          y2={y(0) - 3}
                          stroke={series[si].colour}
                          strokeWidth={2}
                          strokeDasharray="3,2"
                        />
                      );
                    }
                    return (
                      <G key={si}>
                        <Rect
                          x={x - bw * 0.4}
                          y={y(v.estimate)}
                          width={bw * 0.8}
                          height={Math.max(0, y(0) - y(v.estimate))}
                          fill={series[si].colour}
                          opacity={0.85}
                          rx={2}
                        />
                        <Line x1={x} x2={x} y1={y(v.low)} y2={y(v.high)} stroke={colours.ink} strokeWidth={1.5} />
                        <Line x1={x - bw * 0.25} x2={x + bw * 0.25} y1={y(v.low)} y2={y(v.low)} stroke={colours.ink} strokeWidth={1.5} />
                        <Line x1={x - bw * 0.25} x2={x + bw * 0.25} y1={y(v.high)} y2={y(v.high)} stroke={colours.ink} strokeWidth={1.5} />
                      </G>
                    );
                  })}
                  <SvgText x={cx} y={HEIGHT - 9} fontSize={12} fontFamily={fonts.figuresBold} fill={colours.ink} textAnchor="middle">
                    {c.label}
                  </SvgText>
                </G>
              );
            })}
          </Svg>
        );
      }}
    </ChartFrame>
  );
}
