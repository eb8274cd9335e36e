/** The office clock (server/clock.ts): moved by tests, read in the office's time zone. */
import { advanceClockDays, now, officeDate, resetClock, setClockOffset, today } from '../../server/clock';

afterEach(() => {
  resetClock();
  delete process.env.OFFICE_TIME_ZONE;
});

it('moves forward by days and back to real time', () => {
  const real = Date.now();
  advanceClockDays(10);
  expect(now().getTime() - real).toBeGreaterThanOrEqual(10 * 86_400_000);
  expect(now().getTime() - real).toBeLessThan(10 * 86_400_000 + 60_000);
  setClockOffset(0);
  expect(Math.abs(now().getTime() - Date.now())).toBeLessThan(1000);
});

it('gives the calendar date in the office time zone', () => {
  const at = new Date('2026-12-31T23:30:00Z');
  process.env.OFFICE_TIME_ZONE = 'Pacific/Kiritimati'; // UTC+14 all year (IANA tz database)
  expect(officeDate(at)).toBe('2027-01-01');
  process.env.OFFICE_TIME_ZONE = 'Pacific/Pago_Pago'; // UTC−11 all year (IANA tz database)
  expect(officeDate(at)).toBe('2026-12-31');
  expect(today()).toMatch(/^\d{4}-\d{2}-\d{2}$/);
});
