/**
 * First-digit chart: bars of the observed share of each leading digit 1–9 with the
 * expected Benford proportions (log10(1 + 1/d), shared/digits) drawn over them as a brass
 * line with points. Drawn with react-native-svg, which renders to SVG on the web target, in the
 * shared chart frame (components/ui/chart-parts.tsx), which measures the width it has.
 */
import Svg, { Circle, Line, Polyline, Rect, Text as SvgText } from 'react-native-svg';
import { FIRST_DIGIT_EXPECTED } from '../../../shared/digits/expected';
import { colours, fonts } from '../../theme';
import { ChartFrame, ChartGrid, LegendItem } from '../../ui/chart-parts';
import { Txt } from '../../ui/text';

/** Props for {@link DigitChart}. */
export interface DigitChartProps {
  /** First-digit counts, digits 1..9. */
  counts: readonly number[];
  title: string;
  /** One line under the title: how many amounts, and the verdict. */
  caption?: string;
  testID?: string;
}

const HEIGHT = 200;
const PAD = { left: 40, right: 10, top: 12, bottom: 26 };

/** Bars of observed first-digit shares against the expected Benford curve. */
export function DigitChart({ counts, title, caption, testID }: DigitChartProps) {
  const n = counts.reduce((s, c) => s + c, 0);
  const observed = counts.map((c) => (n ? c / n : 0));
  const expected = Array.from(FIRST_DIGIT_EXPECTED);
  // The axis tops at the next 10 % above both series, so the tallest bar never clips.
  const top = Math.max(0.1, Math.ceil((Math.max(...observed, ...expected) + 0.02) * 10) / 10);
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const y = (share: number) => PAD.top + plotH * (1 - share / top);
  const ticks = Array.from({ length: Math.round(top * 10) + 1 }, (_, k) => k / 10);
  const pct = (v: number) => `${Math.round(v * 100)}%`;
  const summary = `${title}. ${n} amounts. ` + observed.map((o, i) => `Digit ${i + 1}: ${pct(o)} observed, ${pct(expected[i])} expected`).join('; ');
  const legend = (
    <>
      <LegendItem swatch={{ backgroundColor: colours.cord, opacity: 0.85 }}>Observed share of leading digit</LegendItem>
      <LegendItem
        mark={
          <Svg width={22} height={10}>
            <Line x1={0} x2={22} y1={5} y2={5} stroke={colours.brass} strokeWidth={2.2} />
            <Circle cx={11} cy={5} r={4} fill={colours.brass} stroke={colours.surface} strokeWidth={1.5} />
          </Svg>
        }
      >
        {"Expected (Benford's law)"}
      </LegendItem>
    </>
  );

  return (
    <ChartFrame title={title} caption={caption} summary={summary} legend={legend} testID={testID}>
      {(width) => {
        if (n === 0) return <Txt tone="soft">No amounts to chart.</Txt>;
        const plotW = Math.max(100, width - PAD.left - PAD.right);
        const slot = plotW / 9;
        const x = (i: number) => PAD.left + slot * i + slot / 2;
        const bw = Math.min(34, slot * 0.62);
        return (
          <Svg width={width} height={HEIGHT}>
            <ChartGrid ticks={ticks} y={y} left={PAD.left} width={plotW} label={pct} />
            {observed.map((o, i) => (
              <Rect key={i} x={x(i) - bw / 2} y={y(o)} width={bw} height={Math.max(0, y(0) - y(o))} fill={colours.cord} opacity={0.85} rx={2} />
            ))}
            <Polyline points={expected.map((e, i) => `${x(i)},${y(e)}`).join(' ')} fill="none" stroke={colours.brass} strokeWidth={2.2} />
            {expected.map((e, i) => (
              <Circle key={i} cx={x(i)} cy={y(e)} r={4} fill={colours.brass} stroke={colours.surface} strokeWidth={1.5} />
            ))}
            {observed.map((_, i) => (
              <SvgText key={i} x={x(i)} y={HEIGHT - 8} fontSize={12} fontFamily={fonts.figuresBold} fill={colours.ink} textAnchor="middle">
                {String(i + 1)}
              </SvgText>
            ))}
          </Svg>
        );
      }}
    </ChartFrame>
  );
}
