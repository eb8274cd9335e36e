/**
 * Demo data for `npm start`: the Aldermere staff accounts (password `plumbline-demo`, for
 * demonstration only) and, on first run, the Aldermere demo filing batch. Idempotent.
 */
import bcrypt from 'bcryptjs';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import { DEFAULT_HABIT_SHARES, DEMO_YEARS, type GenerateOptions } from '../../shared/demo/aldermere';
import { DEFAULT_INTAKE_LIMITS } from '../../shared/returns/batch-rows';
import type { Role } from '../../shared/roles';
import { ingestUpload } from '../batches/batch.service';
import { createBoss, ensureQueues } from '../queue/queues';
import { insertUser, userNameTaken } from '../users/user.repository';
import { BCRYPT_ROUNDS } from '../users/user.service';
import { writeAnswers, writeCsvBatch } from './batch-files';
import { seedDemoHistory } from './demo-history';
import { accountIdByUsername, anyBatchOnFile } from './demo-seed.repository';

/** The demo password (README says: demo only, change before real use). */
export const DEMO_PASSWORD = 'plumbline-demo';

/** Demo accounts as the README lists them (README.md, "What runs where"); names invented. */
export const DEMO_ACCOUNTS: { username: string; displayName: string; role: Role }[] = [
  { username: 'clerk', displayName: 'Tamsin Orlo (intake)', role: 'clerk' },
  { username: 'examiner', displayName: 'Ivo Brackley', role: 'examiner' },
  { username: 'examiner2', displayName: 'Nell Quarrender', role: 'examiner' },
  { username: 'supervisor', displayName: 'Maud Fennick', role: 'supervisor' },
  { username: 'admin', displayName: 'Osric Pell (systems)', role: 'admin' },
];

/** Creates missing demo accounts; leaves existing ones (and changed passwords) alone. */
export async function seedDemoAccounts(ds: DataSource): Promise<number> {
  let created = 0;
  const hash = await bcrypt.hash(DEMO_PASSWORD, BCRYPT_ROUNDS);
  for (const a of DEMO_ACCOUNTS) {
    if (await userNameTaken(ds.manager, a.username)) continue;
    await insertUser(ds.manager, a, hash);
    created++;
  }
  return created;
}

/**
 * The demo batch: a few thousand Aldermere returns, 2022–2025, about 5 % planted, with every
 * typical-filer habit at its default share (whole units, recurring bills, the large firm,
 * zero-tax refunds, monthly gifts, retirement), as real batches have them.
 */
export const DEMO_BATCH: GenerateOptions = { seed: 'aldermere-demo', returns: 3000, plantShare: 0.05, years: DEMO_YEARS, habits: DEFAULT_HABIT_SHARES };

/** Where the demo's answer file (the planted returns) is written, outside the batch. */
export const DEMO_ANSWERS_DIR = path.resolve(__dirname, '..', '..', '.data', 'demo');

/**
 * On first run (no batch on file yet), generates the Aldermere demo batch as CSV files and
 * loads it through the same intake service as an upload, as the demo clerk, then sends
 * its scoring job so the queue is not empty. Writes the answer file to {@link DEMO_ANSWERS_DIR}.
 * @param evenIfBatches load it even though batches are on file (the invented demo history, seeded just before)
 * @returns a line for the start command, or null when a batch was already there
 */
export async function seedDemoBatch(ds: DataSource, opts: GenerateOptions = DEMO_BATCH, evenIfBatches = false): Promise<string | null> {
  if (!evenIfBatches && (await anyBatchOnFile(ds))) return null;
  const clerkId = await accountIdByUsername(ds, 'clerk');
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'plumbline-demo-'));
  const url = (ds.options as { url?: string }).url;
  const boss = url ? createBoss(url, 'server') : null;
  try {
    const t0 = Date.now();
    const written = await writeCsvBatch(dir, opts);
    writeAnswers(DEMO_ANSWERS_DIR, opts, written.answers);
    if (boss) {
      await boss.start();
      await ensureQueues(boss);
    }
    const file = (t: 'returns' | 'line_items' | 'statements') => ({
      originalName: `aldermere-demo-${t}.csv`,
      path: written.files[t]!,
      size: fs.statSync(written.files[t]!).size,
    });
    const outcome = await ingestUpload(
      { dataSource: ds, boss, limits: DEFAULT_INTAKE_LIMITS },
      { format: 'csv', parts: { returns: file('returns'), line_items: file('line_items'), statements: file('statements') } },
      clerkId ? { id: clerkId } : null,
    );
    if (outcome.kind !== 'accepted') throw new Error(`the demo batch was not accepted: ${JSON.stringify(outcome.body).slice(0, 1000)}`);
    const c = outcome.batch.counts;
    return `loaded the Aldermere demo batch: ${c.returns} returns, ${c.lineItems} line items, ${c.statements} statements in ${((Date.now() - t0) / 1000).toFixed(1)} s; ${written.labels.length} planted returns (and every return's habits) listed in ${path.relative(process.cwd(), DEMO_ANSWERS_DIR)}/answers.json`;
  } finally {
    await boss?.stop({ graceful: false, wait: true }).catch(() => undefined);
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

/** Everything the demo needs. Returns a line for the start command to print. */
export async function seedDemo(ds: DataSource): Promise<string> {
  const accounts = await seedDemoAccounts(ds);
  // An empty office gets the invented past period first, so the current demo batch is the newest.
  const fresh = !(await anyBatchOnFile(ds));
  const history = fresh ? await seedDemoHistory(ds) : null;
  const batch = fresh ? await seedDemoBatch(ds, DEMO_BATCH, true) : null;
  return [accounts ? `created ${accounts} demo accounts` : 'demo accounts present', ...(history ? [history] : []), batch ?? 'demo batch present'].join('; ');
}
