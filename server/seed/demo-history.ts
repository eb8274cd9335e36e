/**
 * Invented demo history for `npm start` (issue 17): so the Programme screen has something to
 * show on first start, the demo adds a past period before the current demo batch. Two earlier
 * Aldermere batches (invented like the rest, labelled "Invented demo history") are loaded through
 * the intake, scored in-process under a pilot profile version that drew 8 % at random for review,
 * moved back 20 and 12 weeks, and every case is closed with an outcome drawn from what was planted
 * in its return: a planted return is mostly adjusted (80 %), a typical one mostly closed with no
 * change (adjusted 10 %, ordinary small corrections), amounts with noise. Nothing here is a
 * finding; the shares are invented for the demonstration (common practice, no source).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import { DEFAULT_HABIT_SHARES, DEMO_YEARS, type GenerateOptions } from '../../shared/demo/aldermere';
import { createRng } from '../../shared/demo/prng';
import { DEFAULT_INTAKE_LIMITS } from '../../shared/returns/batch-rows';
import { ScoringSettingsSchema } from '../../shared/scoring/settings';
import { ingestUpload } from '../batches/batch.service';
import { now } from '../clock';
import { findActiveProfile, insertProfile, lockProfiles, nextProfileVersion } from '../scoring/scoring-profile.repository';
import { scoreBatchNow } from '../scoring/scoring.service';
import { accountIdByUsername } from './demo-seed.repository';
import { writeCsvBatch } from './batch-files';
import { backdateBatch, closeHistoryCases, historyCases, type HistoryOutcome } from './demo-history.repository';

/** The past period: two batches, their age and how long their cases took. */
export const DEMO_HISTORY: { label: string; options: GenerateOptions; weeksAgo: number; closedOverWeeks: number }[] = [
  {
    label: 'Invented demo history: spring batch',
    options: { seed: 'aldermere-history-1', returns: 600, plantShare: 0.1, years: DEMO_YEARS, habits: DEFAULT_HABIT_SHARES, refPrefix: 'ALH' },
    weeksAgo: 20,
    closedOverWeeks: 11,
  },
  {
    label: 'Invented demo history: summer batch',
    options: { seed: 'aldermere-history-2', returns: 600, plantShare: 0.1, years: DEMO_YEARS, habits: DEFAULT_HABIT_SHARES, refPrefix: 'ALJ' },
    weeksAgo: 12,
    closedOverWeeks: 10,
  },
];

/** The pilot profile the history was scored under: the active profile's settings, 8 % drawn at random. */
const PILOT_RANDOM_SHARE = 0.08;
const WEEK_MS = 7 * 24 * 3600 * 1000;

/**
 * Adds the invented past period (call on first start only, before the current demo batch is
 * loaded, so the demo batch is still the newest). Needs the demo accounts.
 * @returns a line for the start command
 */
export async function seedDemoHistory(ds: DataSource): Promise<string> {
  const t0 = Date.now();
  const clerkId = await accountIdByUsername(ds, 'clerk');
  const supervisorId = await accountIdByUsername(ds, 'supervisor');
  const examiners = (await Promise.all(['examiner', 'examiner2'].map((u) => accountIdByUsername(ds, u)))).filter((x): x is string => x !== null);
  if (!examiners.length || !supervisorId) throw new Error('the demo history needs the demo accounts (examiner, examiner2, supervisor)');
  const version = await ds.transaction(async (m) => {
    await lockProfiles(m);
    const v = await nextProfileVersion(m);
    const active = ScoringSettingsSchema.parse((await findActiveProfile(m)).settings);
    await insertProfile(m, {
      version: v,
      settings: { ...active, randomShare: PILOT_RANDOM_SHARE },
      note: 'Invented demo history: the pilot period, 8 % of each batch chosen at random for review',
      authorId: supervisorId,
      active: false,
    });
    return v;
  });
  let closed = 0;
  for (const h of DEMO_HISTORY) {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-history-'));
    try {
      const written = await writeCsvBatch(dir, h.options);
      const file = (t: 'returns' | 'line_items' | 'statements') => ({
        originalName: `${h.options.seed}-${t}.csv`,
        path: written.files[t]!,
        size: fs.statSync(written.files[t]!).size,
      });
      const outcome = await ingestUpload(
        { dataSource: ds, boss: null, limits: DEFAULT_INTAKE_LIMITS },
        { format: 'csv', parts: { returns: file('returns'), line_items: file('line_items'), statements: file('statements') } },
        clerkId ? { id: clerkId } : null,
        h.label,
      );
      if (outcome.kind !== 'accepted') throw new Error(`the demo history batch was not accepted: ${JSON.stringify(outcome.body).slice(0, 500)}`);
      const batchId = outcome.batch.id;
      await scoreBatchNow(ds, batchId, version);
      const start = new Date(now().getTime() - h.weeksAgo * WEEK_MS);
      await backdateBatch(ds, batchId, start);
      const planted = new Set(written.labels.map((l) => l.returnRef));
      const rng = createRng(`${h.options.seed}:outcomes`);
      const cases = await historyCases(ds, batchId);
      const rows: HistoryOutcome[] = cases.map((c) => {
        const plant = planted.has(c.returnRef);
        const adjusted = rng.chance(plant ? 0.8 : 0.1);
        const stake = Number(c.stakeCents);
        // Planted: most of the amount at stake, with noise; typical: an ordinary small correction.
        const cents = plant ? Math.max(5_000, Math.round(stake * (0.4 + 0.9 * rng.next()))) : Math.round(5_000 + 75_000 * rng.next() ** 2);
        return {
          id: c.id,
          assigneeId: examiners[rng.int(0, examiners.length - 1)],
          state: adjusted ? 'closed_adjusted' : 'closed_no_change',
          adjustedCents: adjusted ? cents : null,
          closedAt: new Date(start.getTime() + WEEK_MS * (1 + rng.next() * h.closedOverWeeks)),
          outcome: adjusted ? 'Invented demo history: figures corrected after review.' : 'Invented demo history: the figures were in order.',
        };
      });
      await closeHistoryCases(ds, rows);
      closed += rows.length;
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  }
  return `added invented demo history (${DEMO_HISTORY.length} earlier batches, ${closed} closed cases, profile version ${version}) in ${((Date.now() - t0) / 1000).toFixed(1)} s`;
}
