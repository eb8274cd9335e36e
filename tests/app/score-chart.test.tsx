import { act, create, type ReactTestRenderer } from 'react-test-renderer';
import { ScoreBandsChart } from '../../components/features/batches/score-chart';
import type { BatchOutcome } from '../../shared/returns/batch-rows';

function texts(r: ReactTestRenderer): string[] {
  return r.root.findAll((n) => typeof n.props?.children === 'string').map((n) => n.props.children as string);
}

describe('ScoreBandsChart', () => {
  it('draws ten bands with their counts and says the spread in words', async () => {
    const outcome: BatchOutcome = {
      profileVersion: 2,
      casesOpened: 3,
      failed: 0,
      median: 4.5,
      bands: [0, 10, 20, 30, 40, 50, 60, 70, 80, 90].map((from) => ({ from, returns: from === 0 ? 90 : from === 80 ? 4 : 0, cases: from === 80 ? 3 : 0 })),
    };
    let r!: ReactTestRenderer;
    await act(async () => {
      r = create(<ScoreBandsChart outcome={outcome} />);
    });
    const t = texts(r);
    expect(t).toEqual(expect.arrayContaining(['0', '80', '90', '4', '3', 'Returns scored', 'Of them, cases opened (count in bold)']));
    const label = r.root.findAll((n) => typeof n.props?.accessibilityLabel === 'string' && n.props.accessibilityLabel.startsWith('Scores of'))[0].props
      .accessibilityLabel as string;
    expect(label).toBe('Scores of 94 returns in bands of 10 points: 0–10: 90 returns, 0 cases opened; 80–90: 4 returns, 3 cases opened.');
  });
});
