/**
 * Wording rules for what Plumbline says to taxpayers and about scores
 * (docs/design.md#letters-and-replies, docs/design.md#cautions): the soft check on items an
 * examiner types into a document request, the short caution's content, and the referral
 * units' names.
 */
import { CAUTIONS, SCREENING_CAUTION } from '../../../shared/cautions';
import {
  FLAGGED_LETTER_WORDS,
  flaggedLetterWarning,
  flaggedLetterWords,
  letterItemWarnings,
  REFERRAL_UNIT_LABELS,
  REFERRAL_UNITS,
} from '../../../shared/letters';

describe('flaggedLetterWords', () => {
  it('finds nothing in ordinary requests for records', () => {
    for (const item of [
      'Receipts for vehicle expenses claimed for 2024',
      'Bank statements for the business account, January to December',
      'Digital copies of invoices are fine',
      'Payslips from each employer',
      'A short note on the medical bills paid and not reimbursed',
      'Your scorecard from the chamber of commerce', // "scorecard" is not "score"
    ]) {
      expect({ item, words: flaggedLetterWords(item) }).toEqual({ item, words: [] });
    }
  });

  it('finds each listed word and its usual inflections, whatever the case', () => {
    const cases: [string, string[]][] = [
      ['Receipts behind the risky round amounts', ['risk']],
      ['Records that explain your RISK score', ['risk', 'score']],
      ['Invoices for the amounts we scored highly', ['score']],
      ['Why so many amounts start with the digit 9', ['digit']],
      ['Records behind the pattern of round figures', ['pattern']],
      ["Amounts that depart from Benford's law", ['Benford']],
      ['Proof the receipts are not fraudulent', ['fraud']],
      ['Papers to clear our suspicions', ['suspicion']],
      ['Invoices for the suspicious expenses', ['suspicion']],
      ['We suspect the wages are understated', ['suspect']],
      ['Records to avoid a penalty', ['penalty']],
      ['Evidence of tax evasion', ['evasion']],
      ['Receipts for the anomalous expenses', ['anomaly']],
      ['Explain the deviation in first digits', ['digit', 'deviation']],
      ['Statistical checks showed gaps', ['statistics']],
      ['Our algorithm picked these lines', ['algorithm']],
      ['The flagged expenses', ['flagged']],
      ['Records for our investigation', ['investigation']],
      ['This may be a criminal matter', ['criminal']],
    ];
    for (const [text, words] of cases) expect({ text, found: flaggedLetterWords(text) }).toEqual({ text, found: words });
  });

  it('names each word once, in the list order', () => {
    expect(flaggedLetterWords('fraud, risk, Fraud and risks again')).toEqual(['risk', 'fraud']);
  });

  it('covers the words the owners named: risk, score, digit, pattern, Benford, fraud, suspicion, penalty', () => {
    const listed = FLAGGED_LETTER_WORDS.map((f) => f.word);
    for (const w of ['risk', 'score', 'digit', 'pattern', 'Benford', 'fraud', 'suspicion', 'penalty']) expect(listed).toContain(w);
  });

  it('lists the items with flagged words for the API answer, by index', () => {
    expect(letterItemWarnings(['Payslips from each employer', 'Bank statements'])).toEqual([]);
    expect(letterItemWarnings(['Payslips', 'Proof against fraud', 'Receipts', 'Your score'])).toEqual([
      { item: 1, words: ['fraud'] },
      { item: 3, words: ['score'] },
    ]);
  });

  it('gives a soft warning naming the words, or null', () => {
    expect(flaggedLetterWarning('Payslips from each employer')).toBeNull();
    const w = flaggedLetterWarning('Records behind the risk pattern');
    expect(w).toContain('"risk", "pattern"');
    expect(w).toContain('You can still send it');
  });
});

describe('cautions', () => {
  it("the short caution says a score proves nothing and that the office's law and licensed professional practice come first", () => {
    expect(SCREENING_CAUTION).toContain('proves nothing by itself');
    expect(SCREENING_CAUTION).toContain("The office's own law, procedure and licensed professional practice come first.");
  });

  it('no caution calls typical figures "honest"', () => {
    for (const c of [SCREENING_CAUTION, ...CAUTIONS]) expect(c).not.toMatch(/honest/i);
  });
});

describe('referral units', () => {
  it('carry the product\'s own names (no "Unit" names borrowed from a real organisation)', () => {
    expect(REFERRAL_UNITS.map((u) => REFERRAL_UNIT_LABELS[u])).toEqual(['Ledger Visit Team', 'Cross-Check Team', 'Deep Review Team']);
    for (const u of REFERRAL_UNITS) expect(REFERRAL_UNIT_LABELS[u]).not.toMatch(/\b(audit|investigations?|unit)\b/i);
  });
});
