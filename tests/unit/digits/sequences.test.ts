import { profileAmounts } from '../../../shared/digits';

/**
 * Known-conforming sequences (docs/methods.md#known-conforming-sequences: math facts; computed here with BigInt).
 * The engine takes amounts below 10^13, so each term goes in as the decimal text of its
 * first 12 digits: the leading digits, which are all these tests read, are unchanged.
 */
function leadingText(x: bigint): string {
  return x.toString().slice(0, 12);
}

function powersOfTwo(): bigint[] {
  const out: bigint[] = [];
  let p = 1n;
  for (let i = 0; i < 1000; i++) {
    out.push(p); // 2^0 .. 2^999
    p *= 2n;
  }
  return out;
}

function fibonacci(): bigint[] {
  const out: bigint[] = [];
  let a = 1n;
  let b = 1n;
  for (let i = 1; i <= 1000; i++) {
    out.push(a); // F1 .. F1000
    [a, b] = [b, a + b];
  }
  return out;
}

/** Reference counts straight from the BigInt text, independent of the engine. */
function textCounts(xs: bigint[]): { first: number[]; second: number[]; firstTwo: number[] } {
  const first = new Array<number>(9).fill(0);
  const second = new Array<number>(10).fill(0);
  const firstTwo = new Array<number>(90).fill(0);
  for (const x of xs) {
    const t = x.toString();
    first[Number(t[0]) - 1]++;
    if (t.length >= 2) {
      second[Number(t[1])]++;
      firstTwo[Number(t.slice(0, 2)) - 10]++;
    }
  }
  return { first, second, firstTwo };
}

describe.each([
  ['2^0..2^999', powersOfTwo(), [301, 176, 125, 97, 79, 69, 56, 52, 45]],
  ['Fibonacci F1..F1000', fibonacci(), [301, 177, 125, 96, 80, 67, 56, 53, 45]],
])('first digits of %s (math fact, BigInt)', (_name, terms, knownFirst) => {
  const profile = profileAmounts(terms.map(leadingText));
  const ref = textCounts(terms);

  it('counts equal the counts read from the BigInt text', () => {
    expect(profile.firstDigit.counts).toEqual(ref.first);
    expect(profile.secondDigit.counts).toEqual(ref.second);
    expect(profile.firstTwo.counts).toEqual(ref.firstTwo);
    // the well-known counts (math fact; they also match the BigInt computation above)
    expect(profile.firstDigit.counts).toEqual(knownFirst);
  });

  it('conform closely: MAD < 0.001 (docs/methods.md#known-conforming-sequences), level "close" at N = 1000', () => {
    expect(profile.firstDigit.n).toBe(1000);
    expect(profile.firstDigit.mad).toBeLessThan(0.001);
    expect(profile.firstDigit.conformity).toBe('close');
    expect(profile.sizeAware.verdict).toBe('within_expected');
    // Far closer than chance: E[MAD | 1000] is 0.0074 for a random Benford sample
    // (these sequences are equidistributed, not random), so z is strongly negative.
    expect(profile.sizeAware.zScore).toBeLessThan(-2.5);
  });
});

it('Fibonacci leading digits start 1 1 2 3 5 8 1 2 3 5 8 1 2 3 6 9 1 2 4 6 (OEIS A008963, from memory)', () => {
  const profile = fibonacci()
    .slice(0, 20)
    .map((f) => profileAmounts([leadingText(f)]).firstDigit.counts.indexOf(1) + 1);
  expect(profile).toEqual([1, 1, 2, 3, 5, 8, 1, 2, 3, 5, 8, 1, 2, 3, 6, 9, 1, 2, 4, 6]);
});
