/**
 * Every migration, in order. Listed by hand (not globbed) so tsx, jest and the built
 * server all load the same classes. Add new ones at the end.
 */
import { Foundation1764600000000 } from './1764600000000-foundation';
import { Auth1764650000000 } from './1764650000000-auth';
import { Intake1764700000000 } from './1764700000000-intake';
import { Scoring1764800000000 } from './1764800000000-scoring';
import { CaseNotes1764850000000 } from './1764850000000-case-notes';
import { Letters1764900000000 } from './1764900000000-letters';
import { ScoringVersionTwo1764960000000 } from './1764960000000-scoring-v2';
import { Programme1765000000000 } from './1765000000000-programme';
import { CaseCalendar1765100000000 } from './1765100000000-case-calendar';
import { ScoringVersionThree1766000000000 } from './1766000000000-scoring-v3';
import { BatchLabel1766050000000 } from './1766050000000-batch-label';
import { MyCases1766040000000 } from './1766040000000-my-cases';
import { ClosingLetters1766020000000 } from './1766020000000-closing-letters';
import { CaseAnalyses1766070000000 } from './1766070000000-case-analyses';
import { LoginThrottle1766090000000 } from './1766090000000-login-throttle';
import { PartitionByYear1766100000000 } from './1766100000000-partition-by-year';

export const migrations = [
  Foundation1764600000000,
  Auth1764650000000,
  Intake1764700000000,
  Scoring1764800000000,
  CaseNotes1764850000000,
  Letters1764900000000,
  ScoringVersionTwo1764960000000,
  Programme1765000000000,
  CaseCalendar1765100000000,
  ScoringVersionThree1766000000000,
  ClosingLetters1766020000000,
  MyCases1766040000000,
  BatchLabel1766050000000,
  CaseAnalyses1766070000000,
  LoginThrottle1766090000000,
  PartitionByYear1766100000000,
];
