import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { DeadlineLabel, daysLeftText } from '../../components/features/cases/deadline-bits';
import { colours } from '../../components/theme';
import { Txt } from '../../components/ui/text';

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

async function render(days: number | null, assessBy: string | null = '2030-04-30') {
  let r!: ReactTestRenderer;
  await act(async () => {
    r = create(<DeadlineLabel assessBy={assessBy} daysLeft={days} />);
  });
  return r.root.findByType(Txt).props;
}

describe('DeadlineLabel (issue 13)', () => {
  it('looks stronger inside 90 days and strongest inside 30', async () => {
    expect(await render(400)).toMatchObject({ tone: 'soft', bold: false });
    expect(await render(89)).toMatchObject({ tone: 'warn', bold: true });
    expect(await render(29)).toMatchObject({ tone: 'alert', bold: true });
    expect((await render(12)).children).toEqual(['assess by ', '2030-04-30', ' · ', '12 days left']);
    expect((await render(null, null)).children).toBe('No assessment deadline');
  });

  it('keeps text readable on its background (WCAG AA 4.5:1)', () => {
    expect(contrast(colours.alert, colours.alertSoft)).toBeGreaterThanOrEqual(4.5);
    expect(contrast(colours.warn, colours.warnSoft)).toBeGreaterThanOrEqual(4.5);
  });

  it('words the days left', () => {
    expect(daysLeftText(1)).toBe('1 day left');
    expect(daysLeftText(0)).toBe('last day');
    expect(daysLeftText(-3)).toBe('3 days past');
  });
});
