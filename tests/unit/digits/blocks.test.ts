import { formatCents, mulberry32, profileAmounts, profileCents } from '../../../shared/digits';

/**
 * The profile reads long lists a block at a time (shared/digits/profile.ts). Lists of several
 * blocks, with a zero-heavy stretch and one amount beyond 2^31 cents in a late block, against
 * a plain computation of the repeated amounts and second-order differences.
 */
describe('profiles of lists longer than one block', () => {
  const rnd = mulberry32(99);
  const cents: number[] = [];
  for (let i = 0; i < 150_000; i++) {
    const c = i >= 70_000 && i < 72_000 ? 0 : Math.round(10 ** (6 * rnd()));
    cents.push(rnd() < 0.2 ? -c : c);
  }
  cents[140_001] = 98_765_432_101_234; // 2 * |c| is far above 2^32
  const strings = cents.map(formatCents);

  it('text read in blocks gives the profile of the same cents', () => {
    expect(profileAmounts(strings)).toEqual(profileCents(cents));
    expect(profileAmounts(strings).count).toBe(150_000);
  });

  it('repeated amounts and second-order differences as counted the plain way', () => {
    const p = profileAmounts(strings, { top: 5 });
    const seen = new Map<number, number>();
    for (const c of cents) if (c !== 0) seen.set(c, (seen.get(c) ?? 0) + 1);
    const repeated = [...seen]
      .filter(([, n]) => n >= 2)
      .sort((a, b) => b[1] - a[1])
      .slice(0, 5);
    // the counts of the five most repeated (the order among equal counts is the profile's own)
    expect(p.duplicates.map((d) => d.count)).toEqual(repeated.map(([, n]) => n));
    const sizes = cents.filter((c) => c !== 0).map(Math.abs);
    sizes.sort((a, b) => a - b);
    let zero = 0;
    const counts = new Array<number>(90).fill(0);
    for (let i = 1; i < sizes.length; i++) {
      const d = sizes[i] - sizes[i - 1];
      if (d === 0) zero++;
      else counts[Number(String(d).padEnd(2, '0').slice(0, 2)) - 10]++;
    }
    expect(p.secondOrder.zeroDifferences).toBe(zero);
    expect(p.secondOrder.counts).toEqual(counts);
    expect(p.secondOrder.n).toBe(sizes.length - 1 - zero);
  });
});
