import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { STATE_LOOK, StateBadge } from '../../components/features/cases/case-bits';
import { colours } from '../../components/theme';
import { Txt } from '../../components/ui/text';
import { CASE_STATES } from '../../shared/cases';

/** WCAG 2.1 relative luminance and contrast ratio (W3C, WCAG 2.1 "relative luminance" and "contrast ratio" definitions). */
function contrast(a: string, b: string): number {
  const lum = (hex: string) => {
    const n = parseInt(hex.slice(1), 16);
    const [r, g, bl] = [16, 8, 0].map((s) => ((n >> s) & 255) / 255).map((c) => (c <= 0.03928 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4));
    return 0.2126 * r + 0.7152 * g + 0.0722 * bl;
  };
  const [hi, lo] = [lum(a), lum(b)].sort((x, y) => y - x);
  return (hi + 0.05) / (lo + 0.05);
}

const TONE: Record<string, string> = {
  ink: colours.ink,
  brass: colours.brassInk,
  warn: colours.warn,
  ok: colours.ok,
  alert: colours.alert,
  soft: colours.inkSoft,
};

describe('StateBadge', () => {
  it('shows a referred case in a neutral colour, never the alert red (a referral is no verdict)', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<StateBadge state="referred" />);
    });
    const txt = r.root.findByType(Txt);
    expect(txt.props.children).toBe('Referred');
    expect(STATE_LOOK.referred.fg).not.toBe('alert');
    expect([colours.alert, colours.alertSoft]).not.toContain(STATE_LOOK.referred.bg);
  });

  it('reads at 4.5:1 or more in every state (WCAG 2.1 AA, success criterion 1.4.3)', () => {
    // Check: the W3C's own example pair, black on white, is 21:1.
    expect(contrast('#000000', '#FFFFFF')).toBeCloseTo(21, 5);
    for (const state of CASE_STATES) {
      const look = STATE_LOOK[state];
      expect({ state, ok: contrast(TONE[look.fg], look.bg) >= 4.5 }).toEqual({ state, ok: true });
    }
  });
});
