/**
 * Digit analyses of pools from the returns on file (issue 15; docs/methods.md#pooled-figures):
 * one preparer's returns, one line code in one batch or tax year, one taxpayer's years. The
 * pool is named in words with its count of amounts ("Preparer PRP-0042, tax year 2024,
 * 1,234 amounts"), which is what a working paper shows in place of a file's name and hash.
 * Reading a pool reads taxpayers' figures: each read is one line in the access log.
 */
import type { DataSource } from 'typeorm';
import { MAX_POOL_AMOUNTS, type AnalysisPool, type PoolAnalysis, type PoolChoices } from '../../shared/analyses';
import { digitResult, digitResultSchema } from '../../shared/digits';
import { AmountColumnBuilder, type AmountColumn } from '../../shared/digits/wide';
import { defaultBatchLabel } from '../../shared/returns/batch-rows';
import { LINE_CODE_DEFS } from '../../shared/returns/line-codes';
import { recordAccess, type AccessEvent } from '../access-log/access-log.service';
import type { StaffAudit } from '../access-log/audit-context';
import { taxpayerLabelOf } from '../cases/case-workflow';
import { officeDate } from '../clock';
import type { Db } from '../db/db';
import { HttpError } from '../http/errors';
import { countPoolAmounts, findPoolBatch, findPoolBatches, findPoolPreparers, findPreparer, findTaxpayerName, readPoolAmounts } from './pool.repository';

/** A pool as read: its amounts, what was read, its description and the access-log line. */
export interface PoolRead {
  column: AmountColumn;
  /** Which lines were read ("itemised lines of current returns"). */
  what: string;
  /** The pool in words with its count of amounts. */
  description: string;
  /** The access-log line of the read (the caller writes it in its transaction). */
  event: AccessEvent;
}

const int = (n: number) => n.toLocaleString('en-GB');
const ITEMISED_WHAT = 'itemised lines of current returns (totals, the refund and zero amounts left out)';

function yearsText(years: number[]): string {
  if (years.length === 0) return 'no tax years on file';
  return years.length === 1 ? `tax year ${years[0]}` : `tax years ${years[0]}–${years[years.length - 1]}`;
}

/**
 * Reads a pool: checks that what it names exists (404 otherwise), refuses a pool over `max`
 * amounts (413, saying how to narrow it) or without amounts (422), and reads the amounts in
 * chunks.
 * @param max most amounts read ({@link MAX_POOL_AMOUNTS}; tests pass a small one)
 */
export async function readPool(db: Db, pool: AnalysisPool, max: number = MAX_POOL_AMOUNTS): Promise<PoolRead> {
  let name: string;
  let what = ITEMISED_WHAT;
  const event: AccessEvent = { action: 'view', recordType: 'line_item' };
  const narrow =
    pool.kind === 'preparer'
      ? pool.taxYear === undefined
        ? 'choose one tax year'
        : 'analyse the line codes apart (a line-code pool)'
      : pool.kind === 'lineCode'
        ? pool.batchId === undefined
          ? 'choose one batch instead of a whole tax year'
          : 'choose another line code'
        : 'analyse its returns one at a time';
  switch (pool.kind) {
    case 'preparer': {
      const p = await findPreparer(db, pool.preparerId);
      if (!p) throw new HttpError(404, 'No such preparer. Choose one from the list of preparers.');
      name = `Preparer ${p.code}`;
      event.recordId = p.id;
      break;
    }
    case 'lineCode': {
      const def = LINE_CODE_DEFS[pool.lineCode];
      what = `line ${pool.lineCode} (${def.label}) of current returns`;
      if (pool.batchId !== undefined) {
        const b = await findPoolBatch(db, pool.batchId);
        if (!b) throw new HttpError(404, 'No such batch. Choose one from the list of batches.');
        name = `Line ${def.label} (${pool.lineCode}), ${b.label ?? defaultBatchLabel(b.batchNo, officeDate(b.createdAt), b.format)}`;
        event.recordId = b.id;
      } else name = `Line ${def.label} (${pool.lineCode}), tax year ${pool.taxYear}`;
      break;
    }
    case 'taxpayer': {
      const label = await taxpayerLabelOf(db, pool.taxpayerId);
      const taxpayer = label === null ? null : await findTaxpayerName(db, pool.taxpayerId);
      if (label === null || taxpayer === null) throw new HttpError(404, 'No such taxpayer.');
      name = `Taxpayer ${taxpayer} (TIN ${label})`;
      event.recordId = pool.taxpayerId;
      event.taxpayerId = pool.taxpayerId;
      event.taxpayerLabel = label;
      break;
    }
  }
  const { count, taxYears } = await countPoolAmounts(db, pool);
  const scope =
    pool.kind === 'preparer'
      ? pool.taxYear === undefined
        ? `, ${yearsText(taxYears)}`
        : `, tax year ${pool.taxYear}`
      : pool.kind === 'taxpayer'
        ? `, ${yearsText(taxYears)}`
        : '';
  if (count === 0) throw new HttpError(422, `${name}${scope}: no amounts on file to analyse. Choose another pool.`);
  if (count > max) {
    throw new HttpError(413, `${name}${scope} holds ${int(count)} amounts, more than the ${int(max)} one analysis reads. Narrow the pool: ${narrow}.`, {
      limit: max,
    });
  }
  const amounts = new AmountColumnBuilder();
  const read = await readPoolAmounts(db, pool, max, (cents) => {
    for (const c of cents) amounts.push(c);
  });
  const description = `${name}${scope}, ${int(read)} amount${read === 1 ? '' : 's'}`;
  event.detail = `digit analysis pool: ${description}`;
  return { column: amounts.column(), what, description, event };
}

/** The digit analysis of a pool, kept nowhere; the read is logged. */
export async function analysePool(ds: DataSource, audit: StaffAudit, pool: AnalysisPool): Promise<PoolAnalysis> {
  return ds.transaction(async (m) => {
    const p = await readPool(m, pool);
    await recordAccess(m, audit, p.event);
    return { description: p.description, result: digitResultSchema.parse(JSON.parse(JSON.stringify(digitResult(p.column)))) };
  });
}

/** What the pool pickers offer: preparers, batches with their tax years, and the tax years on file. */
export async function listPoolChoices(db: Db): Promise<PoolChoices> {
  const [preparers, batches] = await Promise.all([findPoolPreparers(db), findPoolBatches(db)]);
  return {
    preparers,
    batches: batches.map((b) => ({ id: b.id, label: b.label ?? defaultBatchLabel(b.batchNo, officeDate(b.createdAt), b.format), taxYears: b.taxYears })),
    taxYears: [...new Set(batches.flatMap((b) => b.taxYears))].sort((a, b) => a - b),
  };
}
