/**
 * First-digit chart: bars of the observed share of each leading digit 1–9 with the
 * expected Benford proportions (log10(1 + 1/d), shared/digits) drawn over them as a brass
 * line with points. Drawn with react-native-svg, which renders to SVG on the web target;
 * it measures its own width so it stays legible from a 390-px phone to a wide screen.
 */
import { useState } from 'react';
import { View } from 'react-native';
import Svg, { Circle, G, Line, Polyline, Rect, Text as SvgText } from 'react-native-svg';
import { FIRST_DIGIT_EXPECTED } from '../../../shared/digits';
import { colours, fonts, space } from '../../theme';
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
  const [width, setWidth] = useState(320);
  const n = counts.reduce((s, c) => s + c, 0);
  const observed = counts.map((c) => (n ? c / n : 0));
  const expected = Array.from(FIRST_DIGIT_EXPECTED);
  // The axis tops at the next 10 % above both series, so the tallest bar never clips.
  const top = Math.max(0.1, Math.ceil((Math.max(...observed, ...expected) + 0.02) * 10) / 10);
  const plotW = Math.max(100, width - PAD.left - PAD.right);
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const slot = plotW / 9;
  const x = (i: number) => PAD.left + slot * i + slot / 2;
  const y = (share: number) => PAD.top + plotH * (1 - share / top);
  const ticks = Array.from({ length: Math.round(top * 10) + 1 }, (_, k) => k / 10);
  const pct = (v: number) => `${Math.round(v * 100)}%`;
  const summary = `${title}. ${n} amounts. ` + observed.map((o, i) => `Digit ${i + 1}: ${pct(o)} observed, ${pct(expected[i])} expected`).join('; ');

  return (
    <View style={{ gap: space.xs }} testID={testID}>
      <Txt bold>{title}</Txt>
      {caption && (
        <Txt variant="small" tone="soft">
          {caption}
        </Txt>
      )}
      <View onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))} accessible accessibilityRole="image" accessibilityLabel={summary}>
        {n === 0 ? (
          <Txt tone="soft">No amounts to chart.</Txt>
        ) : (
          <Svg width={width} height={HEIGHT}>
            {ticks.map((t) => (
              <G key={t}>
                <Line
                  x1={PAD.left}
                  x2={PAD.left + plotW}
                  y1={y(t)}
                  y2={y(t)}
                  stroke={t === 0 ? colours.inkSoft : colours.line}
                  strokeWidth={t === 0 ? 1.2 : 1}
                />
                <SvgText x={PAD.left - 6} y={y(t) + 4} fontSize={11} fontFamily={fonts.figures} fill={colours.inkSoft} textAnchor="end">
                  {pct(t)}
                </SvgText>
              </G>
            ))}
            {observed.map((o, i) => {
              const bw = Math.min(34, slot * 0.62);
              return <Rect key={i} x={x(i) - bw / 2} y={y(o)} width={bw} height={Math.max(0, y(0) - y(o))} fill={colours.cord} opacity={0.85} rx={2} />;
            })}
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
        )}
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'center' }}>
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
          <View style={{ width: 12, height: 12, borderRadius: 2, backgroundColor: colours.cord, opacity: 0.85 }} />
          <Txt variant="caption" tone="soft">
            Observed share of leading digit
          </Txt>
        </View>
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
          <Svg width={22} height={10}>
            <Line x1={0} x2={22} y1={5} y2={5} stroke={colours.brass} strokeWidth={2.2} />
            <Circle cx={11} cy={5} r={4} fill={colours.brass} stroke={colours.surface} strokeWidth={1.5} />
          </Svg>
          <Txt variant="caption" tone="soft">
            {"Expected (Benford's law)"}
          </Txt>
        </View>
      </View>
    </View>
  );
}
