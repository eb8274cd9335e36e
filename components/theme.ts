/**
 * Plumbline's look: a plumb line is a weighted cord that shows true vertical, so the
 * palette is cord-and-brass on paper: deep slate-teal ink, a brass accent, warm paper.
 * Type: Atkinson Hyperlegible for reading (made for legibility), IBM Plex Mono for figures
 * so amounts line up. Both ship in fonts/ (SIL Open Font License).
 *
 * Contrast (WCAG 2.1 AA, success criteria 1.4.3 and 1.4.11): every text colour here is at
 * least 4.5:1 on the grounds it is used on (paper, surface, white and its own soft tint), and
 * the edges of controls at least 3:1; tests/e2e/accessibility.test.ts checks every screen
 * with axe-core.
 */
export const colours = {
  ink: '#1E3B3F',
  inkSoft: '#4A6366',
  /** Quiet text (captions, line numbers): still 4.5:1 on paper, surface and white. */
  inkFaint: '#5A6B6C',
  paper: '#F6F3EC',
  surface: '#FFFDF8',
  line: '#DCD5C6',
  /** Edges of controls (inputs, checkboxes, unselected choices): 3:1 on paper and surface. */
  control: '#7E786B',
  /** The brass of fills, bars and borders. Too light for text: text uses brassInk. */
  brass: '#B0791E',
  /** Brass for text (links, quiet buttons): 4.5:1 on paper, surface and brassSoft. */
  brassInk: '#83580A',
  brassSoft: '#F1E2C4',
  cord: '#2F5D62',
  ok: '#3F6F4A',
  okSoft: '#DDEBDC',
  warn: '#8A4B08',
  warnSoft: '#F6E7C3',
  alert: '#9C3324',
  alertSoft: '#F4DAD3',
  /** A neutral ground for states that are no verdict (e.g. a referral). */
  neutralSoft: '#E7E4DD',
  /** Quiet text on the ink top bar and score panel: 6.9:1 on ink. */
  onInkSoft: '#B9C8C6',
  white: '#FFFFFF',
} as const;

/** Font family names as registered with expo-font (see app/_layout.tsx). */
export const fonts = {
  body: 'AtkinsonHyperlegible',
  bodyBold: 'AtkinsonHyperlegible-Bold',
  bodyItalic: 'AtkinsonHyperlegible-Italic',
  figures: 'PlexMono',
  figuresBold: 'PlexMono-SemiBold',
} as const;

/** The font files, for expo-font's useFonts. */
export const fontFiles = {
  [fonts.body]: require('../fonts/AtkinsonHyperlegible_400Regular.ttf'),
  [fonts.bodyBold]: require('../fonts/AtkinsonHyperlegible_700Bold.ttf'),
  [fonts.bodyItalic]: require('../fonts/AtkinsonHyperlegible_400Regular_Italic.ttf'),
  [fonts.figures]: require('../fonts/IBMPlexMono_400Regular.ttf'),
  [fonts.figuresBold]: require('../fonts/IBMPlexMono_600SemiBold.ttf'),
};

/** 4-point spacing scale. */
export const space = { xs: 4, sm: 8, md: 12, lg: 16, xl: 24, xxl: 32, xxxl: 48 } as const;

/** Type scale (size / line height), a 1.2 ratio from 15 px body text. */
export const type = {
  caption: { fontSize: 12.5, lineHeight: 17 },
  small: { fontSize: 13.5, lineHeight: 19 },
  body: { fontSize: 15, lineHeight: 22 },
  lead: { fontSize: 18, lineHeight: 26 },
  title: { fontSize: 21.5, lineHeight: 28 },
  display: { fontSize: 26, lineHeight: 32 },
} as const;

export const radius = { sm: 4, md: 8, lg: 14 } as const;

/** Width at which the layout switches from phone (stacked) to wide (side rail, tables). */
export const WIDE_BREAKPOINT = 900;
/** Content never grows past this on very wide screens. */
export const MAX_CONTENT_WIDTH = 1180;
