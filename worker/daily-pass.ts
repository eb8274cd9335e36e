/**
 * The daily pass in the worker (issue 13): a pg-boss schedule sends one `daily-pass` job a
 * day at HOUSEKEEPING_HOUR in the office's time zone (OFFICE_TIME_ZONE; pg-boss reads the
 * cron in that zone), and the handler runs server/housekeeping/housekeeping.service.ts.
 * The pass is idempotent per office day, so a retried or doubled job does nothing new.
 */
import { createMailer } from '../server/mail/mailer';
import { officeTimeZone } from '../server/clock';
import { housekeepingSettings, runDailyPass } from '../server/housekeeping/housekeeping.service';
import { QUEUES } from '../server/queue/queues';
import type { WorkerDeps } from './jobs';

/** The cron line of the schedule for an hour of the day. */
export function dailyPassCron(hour: number): string {
  return `0 ${hour} * * *`;
}

/** Schedules the daily pass and registers its handler. */
export async function registerDailyPass(deps: WorkerDeps): Promise<void> {
  const log = deps.log ?? ((m: string) => console.log(`[worker] ${m}`));
  const settings = housekeepingSettings();
  const mailer = createMailer(deps.config);
  await deps.boss.schedule(QUEUES.dailyPass, dailyPassCron(settings.hour), {}, { tz: officeTimeZone() ?? Intl.DateTimeFormat().resolvedOptions().timeZone });
  await deps.boss.work(QUEUES.dailyPass, { batchSize: 1, pollingIntervalSeconds: 5 }, async () => {
    const r = await runDailyPass({ dataSource: deps.dataSource, mailer, publicUrl: deps.config.publicUrl }, settings);
    log(`daily pass ${r.day}: ${r.requestsExpired} expired, ${r.remindersSent} reminders, ${r.digestsSent} digests (${r.deadlineWarnings} deadline warnings)`);
  });
}
