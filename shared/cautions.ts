/**
 * The cautions Plumbline shows wherever a score or a letter could be misread
 * (docs/design.md#cautions). One source for the app, the PDFs and the README's wording.
 */

/**
 * Short form for the case and queue screens, the queue export and the referral memo. It
 * names the rules that rank above the product, because a score read without them looks
 * like a finding.
 */
export const SCREENING_CAUTION =
  "A risk score selects a return for a human look. It proves nothing by itself: no assessment, penalty or finding follows from it without an examiner's review. The office's own law, procedure and licensed professional practice come first.";

/** The longer set shown on the about page. */
export const CAUTIONS: readonly string[] = [
  "Digit tests (Benford's law and the tests built on it) and risk factors point to returns worth a closer look. Typical figures can fail them and invented figures can pass them; they prove nothing alone.",
  'Plumbline never assesses tax, sets a penalty or decides an outcome. Every case is worked and decided by a person.',
  'Letters to taxpayers ask for records. They accuse no one and draw no conclusion.',
  "The office's own law, procedure, confidentiality rules and licensed professional practice come first. Where this product and those rules differ, the rules win.",
  'Taxpayer data is confidential. Every view and change is written to the access log.',
];
