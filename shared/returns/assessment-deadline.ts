/**
 * How long the office may assess a return (issue 13). Aldermere's rule, invented for the
 * demo (docs/design.md#line-codes-and-tax-rules holds the other invented tax rules):
 *
 * - The office may assess until 3 years after the later of the filing due date (30 April
 *   after the tax year) and the date the return was filed.
 * - 6 years instead of 3 where the income left out is more than 25 % of the income the
 *   return reported (left out: known from third-party statements at scoring, or from the
 *   examiner's corrected figures).
 * - No limit where no return was filed.
 *
 * "N years after" a date is the same day and month N years later; from 29 February it is
 * 28 February. The last day is included: the office may still assess on `assessBy`.
 *
 * Pure: no clock. The caller passes today's date (server/clock.ts).
 */

/** The caution shown with every deadline: the rule is invented and real periods differ. */
export const ASSESSMENT_DEADLINE_CAUTION =
  'Aldermere’s assessment periods are invented for this demonstration. Real periods come from local law and differ; check the law that applies before relying on a date.';

/** Years the office has in the ordinary case. */
export const STANDARD_ASSESSMENT_YEARS = 3;
/** Years the office has where much income was left out. */
export const EXTENDED_ASSESSMENT_YEARS = 6;
/** Share of the reported income that income left out must exceed for the longer period (25 %), as a fraction n/d. */
export const OMITTED_INCOME_SHARE = { numerator: 1, denominator: 4 } as const;

/** What the rule needs to know about one return. Money in integer cents. */
export interface AssessmentDeadlineInput {
  taxYear: number;
  /** The date the return was filed (YYYY-MM-DD), or null when no return was filed. */
  filedOn: string | null;
  /**
   * Income the return reported, in cents: its gross income (wages + interest + business
   * receipts), before business costs, so a business loss does not make every omission "large".
   */
  reportedIncomeCents: number;
  /** Income left out of the return, in cents (0 when none is known). */
  omittedIncomeCents: number;
}

/** Why the deadline is what it is. */
export type AssessmentBasis = 'standard' | 'omitted-income' | 'no-return';

/** The rule's answer. */
export interface AssessmentDeadline {
  /** Last day the office may assess (YYYY-MM-DD), or null when there is no limit. */
  assessBy: string | null;
  basis: AssessmentBasis;
  /** The date the period runs from: the later of the filing due date and the filing date. */
  runsFrom: string | null;
  /** The period in years, or null when there is no limit. */
  years: number | null;
  /** One sentence for the case screen. */
  explanation: string;
}

/** 30 April after the tax year: the filing due date. */
export function filingDueDate(taxYear: number): string {
  return `${taxYear + 1}-04-30`;
}

/** The same day and month `years` later; 29 February becomes 28 February in a common year. */
export function addYears(isoDate: string, years: number): string {
  const y = Number(isoDate.slice(0, 4)) + years;
  const md = isoDate.slice(5);
  const leap = (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
  return `${String(y).padStart(4, '0')}-${md === '02-29' && !leap ? '02-28' : md}`;
}

/** True when the income left out is more than 25 % of the income reported. */
export function omitsMuchIncome(reportedIncomeCents: number, omittedIncomeCents: number): boolean {
  if (omittedIncomeCents <= 0) return false;
  // omitted > reported × 1/4, in integers: omitted × 4 > reported × 1.
  return omittedIncomeCents * OMITTED_INCOME_SHARE.denominator > Math.max(0, reportedIncomeCents) * OMITTED_INCOME_SHARE.numerator;
}

/** Aldermere's assessment deadline for one return (see the module comment). */
export function assessmentDeadline(input: AssessmentDeadlineInput): AssessmentDeadline {
  if (!input.filedOn) {
    return { assessBy: null, basis: 'no-return', runsFrom: null, years: null, explanation: 'No return was filed: the office may assess at any time.' };
  }
  const due = filingDueDate(input.taxYear);
  const runsFrom = input.filedOn > due ? input.filedOn : due;
  const late = input.filedOn > due;
  const from = late ? `the date it was filed (${input.filedOn}), after the due date ${due}` : `the filing due date ${due}`;
  if (omitsMuchIncome(input.reportedIncomeCents, input.omittedIncomeCents)) {
    return {
      assessBy: addYears(runsFrom, EXTENDED_ASSESSMENT_YEARS),
      basis: 'omitted-income',
      runsFrom,
      years: EXTENDED_ASSESSMENT_YEARS,
      explanation: `${EXTENDED_ASSESSMENT_YEARS} years from ${from}, because income left out of the return is more than 25 % of the income it reported.`,
    };
  }
  return {
    assessBy: addYears(runsFrom, STANDARD_ASSESSMENT_YEARS),
    basis: 'standard',
    runsFrom,
    years: STANDARD_ASSESSMENT_YEARS,
    explanation: `${STANDARD_ASSESSMENT_YEARS} years from ${from}.`,
  };
}

/** Days from `today` to `assessBy` (both YYYY-MM-DD); 0 on the last day, negative after it. */
export function daysUntil(today: string, assessBy: string): number {
  const utc = (s: string) => Date.UTC(Number(s.slice(0, 4)), Number(s.slice(5, 7)) - 1, Number(s.slice(8, 10)));
  return Math.round((utc(assessBy) - utc(today)) / 86_400_000);
}

/** How urgent a deadline looks on screen: inside 30 days, inside 90 days, or neither. */
export function deadlineUrgency(daysLeft: number | null): 'urgent' | 'soon' | 'normal' {
  if (daysLeft === null) return 'normal';
  if (daysLeft < 30) return 'urgent';
  if (daysLeft < 90) return 'soon';
  return 'normal';
}

/** Days inside which a deadline counts as near (the Workload screen's count, the digest). */
export const DEADLINE_NEAR_DAYS = 90;
