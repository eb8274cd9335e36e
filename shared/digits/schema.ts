/**
 * zod 4 schema of the digit profile (docs/design.md#command-line): the object printed by
 * `npm run --silent digits -- FILE --json` and answered by POST /api/analyses/digits.
 * Strict objects, so a field added or renamed in profile.ts without this file fails the tests.
 */

import { z } from 'zod';

const num = z.number();
const nullableNum = z.number().nullable();
const testName = z.enum(['firstDigit', 'secondDigit', 'firstTwo', 'lastTwo']);

/** Conformity level of a pooled set of amounts. */
export const conformitySchema = z.enum(['close', 'acceptable', 'marginal', 'nonconformity', 'too_few']);

/** Size-aware verdict. */
export const sizeAwareVerdictSchema = z.enum(['within_expected', 'elevated', 'high', 'too_few']);

/** One digit test (counts and expected in report order: 1..9, 0..9, 10..99, 00..99). */
export const digitTestSchema = z.strictObject({
  n: z.number().int().nonnegative(),
  counts: z.array(z.number().int().nonnegative()),
  expected: z.array(num),
  mad: nullableNum,
  conformity: conformitySchema,
  chiSquare: nullableNum,
  df: z.number().int(),
  pValue: nullableNum,
  chiSquareValid: z.boolean(),
  ks: nullableNum,
  kuiper: nullableNum,
  ksVerdict: z.enum(['not_rejected', 'rejected_5', 'rejected_1']).nullable(),
  kuiperVerdict: z.enum(['not_rejected', 'rejected_5', 'rejected_1']).nullable(),
  ssd: nullableNum,
  z: z.array(nullableNum),
});

/** Size-aware figure of one test. */
export const sizeAwareSchema = z.strictObject({
  test: testName,
  n: z.number().int().nonnegative(),
  mad: nullableNum,
  expectedMad: nullableNum,
  sdMad: nullableNum,
  excessMad: nullableNum,
  zScore: nullableNum,
  verdict: sizeAwareVerdictSchema,
});

const sideSchema = z.strictObject({
  count: z.number().int().nonnegative(),
  firstDigit: digitTestSchema,
  secondDigit: digitTestSchema,
  firstTwo: digitTestSchema,
  lastTwo: digitTestSchema,
  sizeAware: sizeAwareSchema,
});

/** The whole digit profile. */
export const digitProfileSchema = z.strictObject({
  count: z.number().int().nonnegative(),
  excluded: z.array(
    z.strictObject({
      reason: z.enum(['zero', 'below_10', 'below_1000']),
      description: z.string(),
      count: z.number().int().nonnegative(),
      tests: z.array(testName),
    }),
  ),
  firstDigit: digitTestSchema,
  secondDigit: digitTestSchema,
  firstTwo: digitTestSchema,
  lastTwo: digitTestSchema,
  sizeAware: sizeAwareSchema,
  sizeAwareByTest: z.strictObject({
    firstDigit: sizeAwareSchema,
    secondDigit: sizeAwareSchema,
    firstTwo: sizeAwareSchema,
    lastTwo: sizeAwareSchema,
  }),
  roundShare: z.strictObject({
    n: z.number().int().nonnegative(),
    count: z.number().int().nonnegative(),
    share: nullableNum,
    expected: num,
    pValue: nullableNum,
  }),
  duplicates: z.array(
    z.strictObject({
      amount: z.string().regex(/^-?\d+\.\d\d$/),
      count: z.number().int().min(2),
    }),
  ),
  summation: z.strictObject({
    n: z.number().int().nonnegative(),
    total: nullableNum,
    sums: z.array(nullableNum).length(90),
    proportions: z.array(nullableNum).length(90),
    expected: num,
    mad: nullableNum,
    largest: z.array(z.strictObject({ digits: z.number().int().min(10).max(99), share: num })),
  }),
  secondOrder: z.strictObject({
    n: z.number().int().nonnegative(),
    zeroDifferences: z.number().int().nonnegative(),
    counts: z.array(z.number().int().nonnegative()).length(90),
    mad: nullableNum,
  }),
  distortionFactor: z.strictObject({
    n: z.number().int().nonnegative(),
    mean: nullableNum,
    expectedMean: nullableNum,
    value: nullableNum,
  }),
  positives: sideSchema,
  negatives: sideSchema,
});

/** The digit profile as JSON (what the schema accepts). */
export type DigitProfileJson = z.infer<typeof digitProfileSchema>;

/** One group of a split column: its first-digit test and size-aware figure (split.ts). */
export const groupFiguresSchema = z.strictObject({
  name: z.string(),
  count: z.number().int().nonnegative(),
  firstDigit: digitTestSchema,
  sizeAware: sizeAwareSchema,
});

/**
 * What `npm run digits -- --json` prints and a saved analysis keeps as its result: the
 * profile, and with a split column (`--by`) the split's name and each group's figures.
 */
export const digitResultSchema = digitProfileSchema.extend({
  split: z.strictObject({ column: z.string(), groups: z.array(groupFiguresSchema) }).optional(),
});

/** The result JSON (what the schema accepts). */
export type DigitResultJson = z.infer<typeof digitResultSchema>;
