/** Layout breakpoints shared by every screen. */
import { useWindowDimensions } from 'react-native';

/** Width at and above which Keelson shows the left rail and side-by-side panes. */
export const WIDE_MIN = 900;

export function useIsWide(): boolean {
  return useWindowDimensions().width >= WIDE_MIN;
}
