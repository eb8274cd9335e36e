/**
 * Cases finished per week, with the adjusted ones inside each bar, drawn with react-native-svg
 * like the digit chart (components/features/cases/digit-chart.tsx).
 */
import { useState } from 'react';
import { View } from 'react-native';
import Svg, { G, Line, Rect, Text as SvgText } from 'react-native-svg';
import type { Outcomes } from '../../../shared/programme/api';
import { colours, fonts, space } from '../../theme';
import { Txt } from '../../ui/text';

const HEIGHT = 200;
const PAD = { left: 40, right: 10, top: 12, bottom: 28 };

/** Weekly closures (throughput) and how many of them were adjusted (yield). */
export function TrendChart({ weeks, testID }: { weeks: Outcomes['weekly']; testID?: string }) {
  const [width, setWidth] = useState(320);
  const shown = weeks.slice(-16);
  const max = Math.max(1, ...shown.map((w) => w.finished));
  const step = max <= 5 ? 1 : max <= 20 ? 5 : max <= 100 ? 20 : 100;
  const top = Math.ceil(max / step) * step;
  const plotW = Math.max(100, width - PAD.left - PAD.right);
  const plotH = HEIGHT - PAD.top - PAD.bottom;
  const slot = plotW / Math.max(1, shown.length);
  const bw = Math.min(28, slot * 0.7);
  const y = (v: number) => PAD.top + plotH * (1 - v / top);
  const ticks = Array.from({ length: top / step + 1 }, (_, k) => k * step);
  const summary =
    'Cases finished per week. ' +
    shown.map((w) => `Week of ${w.week}: ${w.finished} finished, ${w.adjusted} adjusted, adjustments ${w.adjustedTotal}`).join('; ');
  const labelEvery = Math.ceil(shown.length / Math.max(1, Math.floor(plotW / 48)));
  return (
    <View style={{ gap: space.xs }} testID={testID}>
      <Txt bold>Cases finished per week</Txt>
      <Txt variant="small" tone="soft">
        Hours are not tracked, so throughput is counted in cases finished. The last {shown.length} week{shown.length === 1 ? '' : 's'} with any.
      </Txt>
      <View onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))} accessible accessibilityRole="image" accessibilityLabel={summary}>
        {shown.length === 0 ? (
          <Txt tone="soft">No cases finished yet.</Txt>
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
                  {String(t)}
                </SvgText>
              </G>
            ))}
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
        )}
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'center' }}>
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
          <View style={{ width: 12, height: 12, borderRadius: 2, backgroundColor: colours.line, borderWidth: 1, borderColor: colours.cord }} />
          <Txt variant="caption" tone="soft">
            Finished
          </Txt>
        </View>
        <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
          <View style={{ width: 12, height: 12, borderRadius: 2, backgroundColor: colours.cord }} />
          <Txt variant="caption" tone="soft">
            Of which closed adjusted
          </Txt>
        </View>
        <Txt variant="caption" tone="soft">
          Week labels: month-day of the Monday.
        </Txt>
      </View>
    </View>
  );
}
