/**
 * How a scored batch's scores spread: one bar per band of ten points, the returns scored in the
 * band, and inside it the share whose case was opened. Drawn with the chart parts every chart
 * shares (components/ui/chart-parts.tsx).
 */
import Svg, { G, Rect, Text as SvgText } from 'react-native-svg';
import { SCORE_BAND_WIDTH, type BatchOutcome } from '../../../shared/returns/batch-rows';
import { colours, fonts } from '../../theme';
import { ChartFrame, ChartGrid, LegendItem } from '../../ui/chart-parts';

/** Round tick steps for a count axis: 1, 2, 5, 10, 20, 50… */
function niceStep(max: number): number {
  const raw = Math.max(1, max / 4);
  const p = 10 ** Math.floor(Math.log10(raw));
  return [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
}

/** The distribution chart of a scored batch, with its text alternative. */
export function ScoreBandsChart({ outcome, testID }: { outcome: BatchOutcome; testID?: string }) {
  const bands = outcome.bands;
  const total = bands.reduce((s, b) => s + b.returns, 0);
  const peak = Math.max(1, ...bands.map((b) => b.returns));
  const step = niceStep(peak);
  // Room above the tallest bar for its two count labels.
  const top = Math.ceil((peak * 1.15) / step) * step;
  const ticks = Array.from({ length: top / step + 1 }, (_, i) => i * step);
  const summary =
    `Scores of ${total.toLocaleString('en-GB')} returns in bands of ${SCORE_BAND_WIDTH} points: ` +
    bands
      .filter((b) => b.returns > 0)
      .map((b) => `${b.from}–${b.from + SCORE_BAND_WIDTH}: ${b.returns} returns, ${b.cases} cases opened`)
      .join('; ') +
    '.';
  const legend = (
    <>
      <LegendItem swatch={{ backgroundColor: colours.line }}>Returns scored</LegendItem>
      <LegendItem swatch={{ backgroundColor: colours.cord, opacity: 0.85 }}>Of them, cases opened (count in bold)</LegendItem>
    </>
  );
  return (
    <ChartFrame
      title="Score distribution"
      caption={`Returns per score band under profile version ${outcome.profileVersion}; a score selects a return for a human look and proves nothing.`}
      summary={summary}
      legend={legend}
      testID={testID}
    >
      {(width) => {
        const height = 180;
        const left = 40;
        const bottom = 22;
        const plotW = Math.max(120, width - left - 4);
        const plotH = height - bottom - 8;
        const y = (v: number) => 8 + plotH - (v / top) * plotH;
        const slot = plotW / bands.length;
        const bw = Math.max(4, slot * 0.7);
        return (
          <Svg width={width} height={height}>
            <ChartGrid ticks={ticks} y={y} left={left} width={plotW} label={(t) => t.toLocaleString('en-GB')} />
            {bands.map((b, i) => {
              const x = left + i * slot + (slot - bw) / 2;
              // A band with a few returns is still seen: at least 3 px, and its counts written above it.
              const h = (v: number) => (v > 0 ? Math.max(3, y(0) - y(v)) : 0);
              const cx = left + i * slot + slot / 2;
              const labelY = y(0) - h(b.returns) - 4;
              return (
                <G key={b.from}>
                  <Rect x={x} y={y(0) - h(b.returns)} width={bw} height={h(b.returns)} fill={colours.line} rx={2} />
                  <Rect x={x} y={y(0) - h(b.cases)} width={bw} height={h(b.cases)} fill={colours.cord} opacity={0.85} rx={2} />
                  {b.returns > 0 && (
                    <SvgText x={cx} y={b.cases > 0 ? labelY - 12 : labelY} fontSize={10} fontFamily={fonts.figures} fill={colours.inkSoft} textAnchor="middle">
                      {b.returns.toLocaleString('en-GB')}
                    </SvgText>
                  )}
                  {b.cases > 0 && (
                    <SvgText x={cx} y={labelY} fontSize={10} fontFamily={fonts.figures} fill={colours.cord} fontWeight="bold" textAnchor="middle">
                      {b.cases.toLocaleString('en-GB')}
                    </SvgText>
                  )}
                  <SvgText x={cx} y={height - 6} fontSize={10} fontFamily={fonts.figures} fill={colours.inkSoft} textAnchor="middle">
                    {slot >= 34 || i % 2 === 0 ? String(b.from) : ''}
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
