/**
 * Digit figures group by group, for a column split by a second column (an account, a month):
 * each group's first-digit test and size-aware figure (docs/methods.md#small-samples), beside
 * the profile of the whole column.
 */
import { DigitCounter } from './counter';
import { profileColumn, type DigitProfile } from './profile';
import { sizeAwareFigure, type SizeAwareResult } from './size-aware';
import { evaluateDigitTest, type DigitTestResult } from './tests';
import type { AmountColumn } from './wide';

/** The first-digit figures of one group. */
export interface GroupFigures {
  /** The split column's text for this group. */
  name: string;
  /** Amounts in the group, zeros included. */
  count: number;
  /** First-digit test of the group. */
  firstDigit: DigitTestResult;
  /** Size-aware figure of the group's first digits. */
  sizeAware: SizeAwareResult;
}

/**
 * First-digit figures of every group, in the order the groups were met.
 *
 * @param column the amounts
 * @param names the group names
 * @param ofCents group index of each ordinary amount
 * @param ofWide group index of each wide amount
 * @returns one entry per group
 */
export function profileGroups(column: AmountColumn, names: readonly string[], ofCents: ArrayLike<number>, ofWide: readonly number[]): GroupFigures[] {
  const g = names.length;
  // Counting sort of the ordinary amounts by group, then one reused counter per group.
  const start = new Int32Array(g + 1);
  for (let i = 0; i < column.cents.length; i++) start[ofCents[i] + 1]++;
  for (let k = 0; k < g; k++) start[k + 1] += start[k];
  const at = start.slice(0, g);
  const sorted = new Float64Array(column.cents.length);
  for (let i = 0; i < column.cents.length; i++) sorted[at[ofCents[i]]++] = column.cents[i];
  const wideOf: number[][] = Array.from({ length: g }, () => []);
  ofWide.forEach((k, i) => wideOf[k].push(i));
  const counter = new DigitCounter();
  const out: GroupFigures[] = [];
  for (let k = 0; k < g; k++) {
    counter.reset();
    counter.addAll(sorted, start[k], start[k + 1]);
    for (const i of wideOf[k]) counter.addWide(column.wide[i].negative, column.wide[i].digits);
    const firstDigit = evaluateDigitTest('firstDigit', counter.counts('firstDigit'));
    out.push({
      name: names[k],
      count: start[k + 1] - start[k] + wideOf[k].length,
      firstDigit,
      sizeAware: sizeAwareFigure('firstDigit', firstDigit.n, firstDigit.mad),
    });
  }
  return out;
}

/** The profile of a column and, when split, each group's figures: the result JSON (schema.ts). */
export type DigitResult = DigitProfile & { split?: { column: string; groups: GroupFigures[] } };

/**
 * The result of a column, split when groups are given.
 *
 * @param column the amounts
 * @param groups the split column's name, group names and each amount's group
 * @returns the profile, with `split` when grouped
 */
export function digitResult(
  column: AmountColumn,
  groups?: { column: string; names: readonly string[]; ofCents: ArrayLike<number>; ofWide: readonly number[] },
): DigitResult {
  const profile = profileColumn(column);
  if (!groups) return profile;
  return { ...profile, split: { column: groups.column, groups: profileGroups(column, groups.names, groups.ofCents, groups.ofWide) } };
}
