/** Every TypeORM entity. Add new ones here. */
import { AccessLog } from '../access-log/access-log.entity';
import { FilingBatch } from '../batches/filing-batch.entity';
import { Preparer } from '../preparers/preparer.entity';
import { LineItem } from '../returns/line-item.entity';
import { TaxReturn } from '../returns/tax-return.entity';
import { ThirdPartyStatement } from '../returns/third-party-statement.entity';
import { Taxpayer } from '../taxpayers/taxpayer.entity';
import { CaseEvent } from '../cases/case-event.entity';
import { ExamCase } from '../cases/exam-case.entity';
import { CaseNote } from '../cases/case-note.entity';
import { ReturnScore } from '../scoring/return-score.entity';
import { ScoringProfile } from '../scoring/scoring-profile.entity';
import { ScoringRun } from '../scoring/scoring-run.entity';
import { User } from '../users/user.entity';
import { DocumentRequest } from '../letters/document-request.entity';
import { CaseCorrection } from '../letters/case-correction.entity';
import { Letter } from '../letters/letter.entity';
import { ReplyUpload } from '../letters/reply-upload.entity';
import { CaseAttention } from '../cases/case-attention.entity';
import { SavedViewRecord } from '../saved-views/saved-view.entity';
import { CaseAnalysis } from '../analyses/case-analysis.entity';

export const entities = [
  User,
  AccessLog,
  Taxpayer,
  Preparer,
  FilingBatch,
  TaxReturn,
  LineItem,
  ThirdPartyStatement,
  ScoringProfile,
  ScoringRun,
  ReturnScore,
  ExamCase,
  CaseEvent,
  CaseNote,
  Letter,
  CaseCorrection,
  DocumentRequest,
  ReplyUpload,
  CaseAttention,
  SavedViewRecord,
  CaseAnalysis,
];
