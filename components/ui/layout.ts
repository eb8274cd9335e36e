import { useWindowDimensions } from 'react-native';
import { WIDE_BREAKPOINT } from '../theme';

/** True on screens wide enough for the side rail and tables. */
export function useIsWide(): boolean {
  const { width } = useWindowDimensions();
  return width >= WIDE_BREAKPOINT;
}
