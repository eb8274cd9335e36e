/**
 * Aldermere's assessment deadline (shared/returns/assessment-deadline.ts), worked examples.
 * The rule is invented for the demo (issue 13); the calendar facts (2028 is a leap year,
 * 2027 is not) are math facts of the Gregorian calendar.
 */
import { addYears, assessmentDeadline, daysUntil, deadlineUrgency, filingDueDate, omitsMuchIncome } from '../../../shared/returns/assessment-deadline';

describe('assessment deadline', () => {
  it('3 years from the due date for a return filed on time', () => {
    // Tax year 2024: due 30 April 2025; filed 2025-03-15 (before the due date) → 30 April 2028.
    const d = assessmentDeadline({ taxYear: 2024, filedOn: '2025-03-15', reportedIncomeCents: 5_000_000, omittedIncomeCents: 0 });
    expect(filingDueDate(2024)).toBe('2025-04-30');
    expect(d).toMatchObject({ assessBy: '2028-04-30', basis: 'standard', runsFrom: '2025-04-30', years: 3 });
  });

  it('3 years from the filing date for a return filed late', () => {
    // Tax year 2023: due 30 April 2024; filed 2024-09-02 → 2 September 2027.
    const d = assessmentDeadline({ taxYear: 2023, filedOn: '2024-09-02', reportedIncomeCents: 5_000_000, omittedIncomeCents: 1_000_000 });
    expect(d).toMatchObject({ assessBy: '2027-09-02', basis: 'standard', runsFrom: '2024-09-02', years: 3 });
  });

  it('6 years where income left out is more than 25 % of the income reported', () => {
    // Reported 40,000.00; left out 10,000.01 (> 25 %) → 6 years from 30 April 2025 = 30 April 2031.
    const d = assessmentDeadline({ taxYear: 2024, filedOn: '2025-02-01', reportedIncomeCents: 4_000_000, omittedIncomeCents: 1_000_001 });
    expect(d).toMatchObject({ assessBy: '2031-04-30', basis: 'omitted-income', years: 6 });
    // Exactly 25 % is not more than 25 %: 3 years.
    expect(assessmentDeadline({ taxYear: 2024, filedOn: '2025-02-01', reportedIncomeCents: 4_000_000, omittedIncomeCents: 1_000_000 }).basis).toBe('standard');
    // Nothing reported and something left out: more than 25 % of nothing.
    expect(omitsMuchIncome(0, 1)).toBe(true);
    expect(omitsMuchIncome(0, 0)).toBe(false);
  });

  it('6 years from a late filing date', () => {
    const d = assessmentDeadline({ taxYear: 2022, filedOn: '2024-01-10', reportedIncomeCents: 1_000_000, omittedIncomeCents: 900_000 });
    expect(d).toMatchObject({ assessBy: '2030-01-10', basis: 'omitted-income', runsFrom: '2024-01-10' });
  });

  it('no limit where no return was filed', () => {
    expect(assessmentDeadline({ taxYear: 2024, filedOn: null, reportedIncomeCents: 0, omittedIncomeCents: 500_000 })).toMatchObject({
      assessBy: null,
      basis: 'no-return',
      years: null,
    });
  });

  it('counts years on the calendar: 29 February to 28 February', () => {
    // 2028 is a leap year; 2031 is not (Gregorian rule: divisible by 4, not by 100 unless by 400).
    expect(addYears('2028-02-29', 3)).toBe('2031-02-28');
    expect(addYears('2028-02-29', 4)).toBe('2032-02-29');
    expect(assessmentDeadline({ taxYear: 2026, filedOn: '2028-02-29', reportedIncomeCents: 1, omittedIncomeCents: 0 }).assessBy).toBe('2031-02-28');
  });

  it('days left and how urgent they look', () => {
    expect(daysUntil('2028-04-01', '2028-04-30')).toBe(29);
    expect(daysUntil('2028-04-30', '2028-04-30')).toBe(0);
    expect(daysUntil('2028-05-01', '2028-04-30')).toBe(-1);
    // Across a leap day: 2028-02-28 → 2028-03-01 is 2 days.
    expect(daysUntil('2028-02-28', '2028-03-01')).toBe(2);
    expect(deadlineUrgency(29)).toBe('urgent');
    expect(deadlineUrgency(30)).toBe('soon');
    expect(deadlineUrgency(89)).toBe('soon');
    expect(deadlineUrgency(90)).toBe('normal');
    expect(deadlineUrgency(null)).toBe('normal');
  });
});
