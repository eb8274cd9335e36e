/**
 * The access log in plain words (shared/access-log.ts) and batch labels
 * (shared/returns/batch-rows.ts): issue 14. Expected texts are the product's own wording.
 */
import { describeAccess, type AccessGroup } from '../../../shared/access-log';
import { checkBatchLabel, defaultBatchLabel } from '../../../shared/returns/batch-rows';

const g = (over: Partial<AccessGroup>): AccessGroup => ({
  action: 'view',
  route: 'GET /api/cases/:id',
  recordType: 'case',
  detail: null,
  routes: [],
  cases: 1,
  returnRef: 'ALD-2024-000017',
  anonymous: false,
  ...over,
});

describe('describeAccess', () => {
  it('names a case visit by its reference and the parts read, without paths or ids', () => {
    expect(describeAccess(g({ routes: ['GET /api/cases/:id', 'GET /api/cases/:id/letters', 'GET /api/cases/:id/letters/:id/pdf'] }))).toBe(
      'Opened case ALD-2024-000017 (the case, its letters, a letter (PDF))',
    );
    expect(describeAccess(g({ route: 'GET /api/cases', returnRef: null, cases: 25, detail: 'queue page 1' }))).toBe(
      'Looked through the queue (25 cases shown)',
    );
  });

  it('says what a change did', () => {
    expect(describeAccess(g({ action: 'change', detail: 'in_review → awaiting_reply' }))).toBe('Moved case ALD-2024-000017 from in review to awaiting reply');
    expect(describeAccess(g({ action: 'change', detail: 'claimed' }))).toBe('Took case ALD-2024-000017');
    expect(describeAccess(g({ action: 'change', detail: 'note 0193b2d4-aaaa-7bbb-8ccc-123456789abc added' }))).toBe('Added a note to case ALD-2024-000017');
    expect(describeAccess(g({ action: 'change', recordType: 'user', returnRef: null, cases: 0, detail: 'created nell as examiner' }))).toBe(
      'Created the account nell (examiner)',
    );
    expect(describeAccess(g({ action: 'change', recordType: 'document_request', detail: 'reply received: 2 files', anonymous: true }))).toBe(
      'The taxpayer replied on case ALD-2024-000017 (2 files)',
    );
    expect(describeAccess(g({ action: 'export', recordType: 'access-log', returnRef: null, cases: 0, detail: '4 rows; no filters' }))).toBe(
      'Exported the access log (4 rows; no filters)',
    );
  });

  it('falls back to the action and the detail for a kind it does not know', () => {
    expect(describeAccess(g({ action: 'change', recordType: 'something_new', returnRef: null, cases: 0, detail: 'x happened' }))).toBe(
      'Changed something_new: x happened',
    );
  });
});

describe('batch labels', () => {
  it('defaults to the number, the office day and the source', () => {
    expect(defaultBatchLabel(12, '2026-12-02', 'xlsx')).toBe('Batch 12 · 2 Dec 2026 · workbook');
    expect(defaultBatchLabel(3, '2026-01-31', 'csv')).toBe('Batch 3 · 31 Jan 2026 · CSV files');
  });

  it('trims, allows blank, and refuses long or control-character labels with a sentence', () => {
    expect(checkBatchLabel('  Post room  ')).toEqual({ label: 'Post room' });
    expect(checkBatchLabel('')).toEqual({ label: '' });
    expect(checkBatchLabel('x'.repeat(81))).toEqual({ problem: expect.stringMatching(/^Keep the label to 80 characters/) });
    expect(checkBatchLabel('a\tb')).toEqual({ problem: expect.stringMatching(/^The label contains a control character \(U\+0009/) });
  });
});
