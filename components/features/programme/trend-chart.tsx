/**
 * Cases finished per week, with the adjusted ones inside each bar, drawn with react-native-svg
 * in the chart frame the digit chart uses (components/ui/chart-parts.tsx).
 */
import Svg, { G, Rect, Text as SvgText } from 'react-native-svg';
import type { Outcomes } from '../../../shared/programme/api';
import { colours, fonts } from '../../theme';
import { ChartFrame, ChartGrid, LegendItem } from '../../ui/chart-parts';
import { Txt } from '../../ui/text';

const HEIGHT = 200;
const PAD = { left: 40, right: 10, top: 12, bottom: 28 };

/** Weekly closures (throughput) and how many of them were adjusted (yield). */
export function TrendChart({ weeks, testID }: { weeks: Outcomes['weekly']; testID?: string }) {
  const shown = weeks.slice(-16);
  const max = Math.max(1, ...shown.map((w) => w.finished));
  const step = max <= 5 ? 1 : max <= 20 ? 5 : max <= 100 ? 20 : 100;
  const top = Math.ceil(max / step) * step;
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const y = (v: number) => PAD.top + plotH * (1 - v / top);
  const ticks = Array.from({ length: top / step + 1 }, (_, k) => k * step);
  const summary =
    'Cases finished per week. ' +
    shown.map((w) => `Week of ${w.week}: ${w.finished} finished, ${w.adjusted} adjusted, adjustments ${w.adjustedTotal}`).join('; ');
  const legend = (
    <>
      <LegendItem swatch={{ backgroundColor: colours.line, borderWidth: 1, borderColor: colours.cord }}>Finished</LegendItem>
      <LegendItem swatch={{ backgroundColor: colours.cord }}>Of which closed adjusted</LegendItem>
      <Txt variant="caption" tone="soft">
        Week labels: month-day of the Monday.
      </Txt>
    </>
  );
  return (
    <ChartFrame
      title="Cases finished per week"
      caption={`Hours are not tracked, so throughput is counted in cases finished. The last ${shown.length} week${shown.length === 1 ? '' : 's'} with any.`}
      summary={summary}
      legend={legend}
      testID={testID}
    >
      {(width) => {
        if (shown.length === 0) return <Txt tone="soft">No cases finished yet.</Txt>;
        const plotW = Math.max(100, width - PAD.left - PAD.right);
        const slot = plotW / shown.length;
        const bw = Math.min(28, slot * 0.7);
        const labelEvery = Math.ceil(shown.length / Math.max(1, Math.floor(plotW / 48)));
        return (
          <Svg width={width} height={HEIGHT}>
            <ChartGrid ticks={ticks} y={y} left={PAD.left} width={plotW} label={String} />
            {shown.map((w, i) => {
              const x = PAD.left + slot * i + slot / 2;
              return (
                <G key={w.week}>
                  <Rect
                    x={x - bw / 2}
                    y={y(w.finished)}
                    width={bw}
                    height={y(0) - y(w.finished)}
                    fill={colours.line}
                    stroke={colours.cord}
                    strokeWidth={1}
                    rx={2}
                  />
                  <Rect x={x - bw / 2} y={y(w.adjusted)} width={bw} height={y(0) - y(w.adjusted)} fill={colours.cord} opacity={0.9} rx={2} />
                  {i % labelEvery === 0 && (
                    <SvgText x={x} y={HEIGHT - 9} fontSize={11} fontFamily={fonts.figures} fill={colours.ink} textAnchor="middle">
                      {w.week.slice(5)}
                    </SvgText>
                  )}
                </G>
              );
            })}
          </Svg>
        );
      }}
    </ChartFrame>
  );
}
