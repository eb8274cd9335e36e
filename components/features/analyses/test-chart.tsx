/**
 * One digit test as a chart: bars of the observed shares with the expected shares as a brass
 * line, in the shared chart frame (components/ui/chart-parts.tsx). The first-digit test uses
 * the case screen's chart (components/features/cases/digit-chart.tsx); this one draws the
 * others, whose 10 to 100 groups need thinner bars and sparser labels.
 */
import Svg, { Polyline, Rect, Text as SvgText } from 'react-native-svg';
import type { DigitTestName } from '../../../shared/digits/expected';
import { binLabel } from '../../../shared/digits/words';
import { colours, fonts } from '../../theme';
import { ChartFrame, ChartGrid, LegendItem } from '../../ui/chart-parts';

const HEIGHT = 180;
const PAD = { left: 40, right: 8, top: 10, bottom: 24 };

/** Observed against expected shares of one digit test. */
export function TestChart({
  test,
  title,
  caption,
  counts,
  expected,
}: {
  test: DigitTestName;
  title: string;
  caption?: string;
  counts: readonly number[];
  expected: readonly number[];
}) {
  const n = counts.reduce((s, c) => s + c, 0);
  const observed = counts.map((c) => (n ? c / n : 0));
  const top = Math.max(0.02, Math.ceil(Math.max(...observed, ...expected) * 1.15 * 50) / 50);
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const y = (share: number) => PAD.top + plotH * (1 - share / top);
  const step = top > 0.2 ? 0.1 : top > 0.06 ? 0.02 : 0.01;
  const ticks = Array.from({ length: Math.floor(top / step + 1e-9) + 1 }, (_, k) => k * step);
  const pct = (v: number) => `${Math.round(v * 1000) / 10}%`;
  const label = (i: number) => binLabel(test, i);
  const every = counts.length > 20 ? 10 : 1;
  const summary = `${title}. ${n} amounts. ${observed.map((o, i) => `${label(i)}: ${pct(o)} observed, ${pct(expected[i])} expected`).join('; ')}`;
  return (
    <ChartFrame
      title={title}
      caption={caption}
      summary={summary}
      legend={
        <>
          <LegendItem swatch={{ backgroundColor: colours.cord, opacity: 0.85 }}>Observed share</LegendItem>
          <LegendItem swatch={{ backgroundColor: colours.brass, height: 3 }}>Expected share</LegendItem>
        </>
      }
    >
      {(width) => {
        const plotW = Math.max(100, width - PAD.left - PAD.right);
        const slot = plotW / counts.length;
        const x = (i: number) => PAD.left + slot * i + slot / 2;
        return (
          <Svg width={width} height={HEIGHT}>
            <ChartGrid ticks={ticks} y={y} left={PAD.left} width={plotW} label={pct} />
            {observed.map((o, i) => (
              <Rect key={i} x={x(i) - slot * 0.35} y={y(o)} width={slot * 0.7} height={Math.max(0, y(0) - y(o))} fill={colours.cord} opacity={0.85} />
            ))}
            <Polyline points={expected.map((e, i) => `${x(i)},${y(e)}`).join(' ')} fill="none" stroke={colours.brass} strokeWidth={2} />
            {counts.map((_, i) =>
              i % every === 0 ? (
                <SvgText key={i} x={x(i)} y={HEIGHT - 8} fontSize={11} fontFamily={fonts.figures} fill={colours.ink} textAnchor="middle">
                  {label(i)}
                </SvgText>
              ) : null,
            )}
          </Svg>
        );
      }}
    </ChartFrame>
  );
}
