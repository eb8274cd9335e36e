import { Text, type TextProps, type TextStyle } from 'react-native';
import { colours, fonts, type } from '../theme';

type Variant = keyof typeof type;

/** Props for {@link Txt}. */
export interface TxtProps extends TextProps {
  variant?: Variant;
  bold?: boolean;
  /** Figures in the monospaced face, so columns of amounts line up. */
  figures?: boolean;
  /** Text colour; 'brass' is the darker text brass (colours.brassInk), readable on paper. */
  tone?: 'ink' | 'soft' | 'faint' | 'brass' | 'ok' | 'warn' | 'alert' | 'white';
}

const toneColour: Record<NonNullable<TxtProps['tone']>, string> = {
  ink: colours.ink,
  soft: colours.inkSoft,
  faint: colours.inkFaint,
  brass: colours.brassInk,
  ok: colours.ok,
  warn: colours.warn,
  alert: colours.alert,
  white: colours.white,
};

/** All text in Plumbline goes through this, so the shipped fonts are always used. */
export function Txt({ variant = 'body', bold, figures, tone = 'ink', style, ...rest }: TxtProps) {
  const family = figures ? (bold ? fonts.figuresBold : fonts.figures) : bold ? fonts.bodyBold : fonts.body;
  const base: TextStyle = { fontFamily: family, color: toneColour[tone], ...type[variant] };
  return <Text {...rest} style={[base, style]} />;
}
