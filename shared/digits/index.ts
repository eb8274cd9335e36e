/**
 * Digit-analysis engine (Benford's law and the forensic tests built on it), pure TypeScript.
 * Methods and sources: docs/methods.md; interfaces: docs/design.md#api-contract and
 * docs/design.md#command-line.
 *
 * For a list of amounts: {@link profileAmounts} (throws AmountParseError on bad input).
 * For one return at a time, many times over: one {@link DigitCounter} reused with
 * `reset()` / `addAll(cents)`, then {@link summarizeCounter}.
 */

export {
  AMOUNT_LIMIT,
  AmountParseError,
  MAX_ABS_CENTS,
  centsFromNumber,
  centsFromString,
  formatCents,
  parseAmount,
  parseAmounts,
  parseCents,
  type AmountUnit,
  type ParseAmountsOptions,
} from './parse';
export {
  BIN_COUNT,
  DIGIT_LABELS,
  DIGIT_TESTS,
  EXPECTED,
  FIRST_DIGIT_EXPECTED,
  FIRST_TWO_EXPECTED,
  LAST_TWO_EXPECTED,
  SECOND_DIGIT_EXPECTED,
  type DigitTestName,
} from './expected';
export { DigitCounter, decimalDigitCount, firstTwoDigitsOf, type SignSelection } from './counter';
export {
  LAST_TWO_P_THRESHOLDS,
  MAD_THRESHOLDS,
  MIN_N_FOR_CONFORMITY,
  Z_CRITICAL,
  conformityOf,
  evaluateDigitTest,
  meanAbsoluteDeviation,
  zStatistic,
  type Conformity,
  type DigitTestResult,
} from './tests';
export {
  ELEVATED_Z,
  HIGH_Z,
  SIZE_AWARE_MIN_N,
  asymptoticMadSpread,
  expectedMad,
  madSpread,
  sizeAwareFigure,
  sizeAwareVerdict,
  sizeAwareZ,
  type SizeAwareResult,
  type SizeAwareVerdict,
} from './size-aware';
export {
  profileAmounts,
  profileCents,
  profileColumn,
  summarizeCounter,
  type DigitProfile,
  type DigitSummary,
  type DistortionFactor,
  type DuplicateAmount,
  type Exclusion,
  type ExclusionReason,
  type ProfileAmountsOptions,
  type ProfileOptions,
  type RoundShare,
  type SecondOrder,
  type SideProfile,
  type Summation,
} from './profile';
export {
  AMOUNT_FORMS,
  AmountColumnBuilder,
  findAmountErrors,
  type AmountProblem,
  MAX_WIDE_DIGITS,
  amountFromText,
  amountFromValue,
  formatWide,
  parseAmountColumn,
  type AmountColumn,
  type ParseColumnOptions,
  type WideAmount,
} from './wide';
export { digitProfileSchema, digitResultSchema, groupFiguresSchema, type DigitProfileJson, type DigitResultJson } from './schema';
export { digitResult, profileGroups, type DigitResult, type GroupFigures } from './split';
export { DIGIT_TEST_TITLES, binLabel, fixedOrDash, goodnessWords, groupsByZ, largestDeviations, pValueText, percentOrDash, type Deviation } from './words';
export { chiSquareCritical, chiSquareSurvival, binomialUpperTail } from './stats';
export { mulberry32 } from './random';
