import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { amount, age, whole } from '../../components/features/cases/case-bits';
import { DigitChart } from '../../components/features/cases/digit-chart';

function texts(r: ReactTestRenderer): string[] {
  return r.root.findAll((n) => typeof n.props?.children === 'string').map((n) => n.props.children as string);
}

describe('DigitChart', () => {
  it('draws one bar per leading digit, labels the axis 1–9, and says the shares in words', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<DigitChart counts={[30, 18, 12, 10, 8, 7, 6, 5, 4]} title="This return's amounts" caption="100 amounts" />);
    });
    const t = texts(r);
    for (const d of ['1', '2', '3', '4', '5', '6', '7', '8', '9']) expect(t).toContain(d);
    expect(t).toEqual(expect.arrayContaining(['0%', '10%', '20%', '30%', "Expected (Benford's law)", 'Observed share of leading digit']));
    const label = r.root.findAll((n) => typeof n.props?.accessibilityLabel === 'string' && n.props.accessibilityLabel.startsWith("This return's amounts"))[0]
      .props.accessibilityLabel as string;
    expect(label).toContain('Digit 1: 30% observed, 30% expected');
    expect(label).toContain('Digit 9: 4% observed, 5% expected');
  });

  it('says so when there is nothing to chart', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<DigitChart counts={[0, 0, 0, 0, 0, 0, 0, 0, 0]} title="Preparer pool" />);
    });
    expect(texts(r)).toContain('No amounts to chart.');
  });
});

describe('case figures', () => {
  it('writes amounts from decimal text, without floats', () => {
    expect(amount('1234567.05')).toBe('1,234,567.05');
    expect(amount('-2190959.15')).toBe('−2,190,959.15');
    expect(amount(null)).toBe('—');
    expect(whole(4828560.4)).toBe('4,828,560');
    expect(age(new Date(Date.now() - 3 * 86_400_000).toISOString())).toBe('3 days');
  });
});
