import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { IntervalChart } from '../../components/features/programme/interval-chart';
import { TrendChart } from '../../components/features/programme/trend-chart';

function texts(r: ReactTestRenderer): string[] {
  return r.root.findAll((n) => typeof n.props?.children === 'string').map((n) => n.props.children as string);
}
const label = (r: ReactTestRenderer, start: string) =>
  r.root.findAll((n) => typeof n.props?.accessibilityLabel === 'string' && n.props.accessibilityLabel.startsWith(start))[0].props.accessibilityLabel as string;

describe('IntervalChart', () => {
  const enough = { estimate: 0.6, low: 0.48, high: 0.715, method: 'Wilson score interval', enoughData: true };
  const thin = { estimate: 0.5, low: 0.1, high: 0.9, method: 'Wilson score interval', enoughData: false };
  it('draws a bar with whiskers for a figure with enough cases and none for a thin one, and says both in words', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(
        <IntervalChart
          title="Adjustment rate"
          series={[{ name: 'Rate', colour: '#2F5D62' }]}
          categories={[
            { label: 'Selected', values: [enough] },
            { label: 'Random', values: [thin] },
          ]}
        />,
      );
    });
    expect(
      r.root.findAll(
        (n) => n.type === ('Rect' as unknown) || (typeof n.type !== 'string' && (n.type as { displayName?: string; name?: string }).name === 'Rect'),
      ).length,
    ).toBeGreaterThanOrEqual(1);
    const l = label(r, 'Adjustment rate');
    expect(l).toContain('Selected: Rate 60% (95 % interval 48% to 72%)');
    expect(l).toContain('Random: Rate not enough closed cases yet');
  });
});

describe('TrendChart', () => {
  it('says each week in words, and when nothing is finished', async () => {
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<TrendChart weeks={[{ week: '2026-03-02', finished: 13, adjusted: 6, adjustedTotal: '2100.00' }]} />);
    });
    expect(label(r, 'Cases finished per week')).toContain('Week of 2026-03-02: 13 finished, 6 adjusted, adjustments 2100.00');
    await act(async () => {
      r = create(<TrendChart weeks={[]} />);
    });
    expect(texts(r)).toContain('No cases finished yet.');
  });
});
