/**
 * Pieces the react-native-svg charts share (the digit chart, the programme's interval and trend
 * charts), so their grid and legend look the same everywhere.
 */
import { useState, type ReactNode } from 'react';
import { View, type ViewStyle } from 'react-native';
import { G, Line, Text as SvgText } from 'react-native-svg';
import { colours, fonts, space } from '../theme';
import { Txt } from './text';

/** Props for {@link ChartFrame}. */
export interface ChartFrameProps {
  title: string;
  /** One line under the title. */
  caption?: string;
  /** The chart in words: the text alternative of the drawing (WCAG 1.1.1). */
  summary: string;
  /** The legend's entries ({@link LegendItem}s and notes), in one wrapping row. */
  legend: ReactNode;
  testID?: string;
  /** Draws the chart at the width measured (an `<Svg>`, or words when there is nothing to draw). */
  children(width: number): ReactNode;
}

/**
 * Title, caption, drawing and legend of a chart. The drawing measures its own width, so a chart
 * stays legible from a 390-px phone to a wide screen, and stands as one image named by `summary`.
 */
export function ChartFrame({ title, caption, summary, legend, testID, children }: ChartFrameProps) {
  const [width, setWidth] = useState(320);
  return (
    <View style={{ gap: space.xs }} testID={testID}>
      <Txt bold>{title}</Txt>
      {caption && (
        <Txt variant="small" tone="soft">
          {caption}
        </Txt>
      )}
      <View onLayout={(e) => setWidth(Math.round(e.nativeEvent.layout.width))} accessible accessibilityRole="image" accessibilityLabel={summary}>
        {children(width)}
      </View>
      <View style={{ flexDirection: 'row', flexWrap: 'wrap', gap: space.md, alignItems: 'center' }}>{legend}</View>
    </View>
  );
}

/** Props for {@link ChartGrid}. */
export interface ChartGridProps {
  /** Values with a grid line and a label; the line at 0 is the axis and drawn darker. */
  ticks: readonly number[];
  /** Where a value sits, in SVG pixels from the top. */
  y(v: number): number;
  /** Left edge of the plot; the labels stand right-aligned just before it. */
  left: number;
  /** Width of the plot. */
  width: number;
  /** A tick's label. */
  label(t: number): string;
}

/** Horizontal grid lines with their value labels on the left. Goes inside an `<Svg>`. */
export function ChartGrid({ ticks, y, left, width, label }: ChartGridProps) {
  return (
    <>
      {ticks.map((t) => (
        <G key={t}>
          <Line x1={left} x2={left + width} y1={y(t)} y2={y(t)} stroke={t === 0 ? colours.inkSoft : colours.line} strokeWidth={t === 0 ? 1.2 : 1} />
          <SvgText x={left - 6} y={y(t) + 4} fontSize={11} fontFamily={fonts.figures} fill={colours.inkSoft} textAnchor="end">
            {label(t)}
          </SvgText>
        </G>
      ))}
    </>
  );
}

/**
 * One legend entry: a 12-px square styled by `swatch` (its colour, border, opacity), or any
 * other `mark`, then the words.
 */
export function LegendItem({ swatch, mark, children }: { swatch?: ViewStyle; mark?: ReactNode; children: ReactNode }) {
  return (
    <View style={{ flexDirection: 'row', alignItems: 'center', gap: space.xs }}>
      {mark ?? <View style={[{ width: 12, height: 12, borderRadius: 2 }, swatch]} />}
      <Txt variant="caption" tone="soft">
        {children}
      </Txt>
    </View>
  );
}
