import Svg, { Circle, Line, Path } from 'react-native-svg';
import { colours } from '../theme';

/** The Plumbline mark: a cord from a bar with a brass bob: true vertical. */
export function PlumbMark({ size = 28, cord = colours.paper }: { size?: number; cord?: string }) {
  return (
    <Svg width={size} height={size} viewBox="0 0 32 32" accessibilityLabel="Plumbline mark">
      <Line x1="6" y1="4" x2="26" y2="4" stroke={cord} strokeWidth={2.5} strokeLinecap="round" />
      <Line x1="16" y1="4" x2="16" y2="18" stroke={cord} strokeWidth={1.8} />
      <Circle cx="16" cy="19" r="1.6" fill={cord} />
      <Path d="M16 20 L22 24 L16 30 L10 24 Z" fill={colours.brass} />
    </Svg>
  );
}
