/**
 * The access log contract: who viewed or changed which taxpayer's data, when.
 */
import { z } from 'zod';
import { noControlChars } from './text';
import { RoleSchema } from './roles';

export const ACCESS_ACTIONS = ['view', 'change', 'export', 'sign-in', 'sign-out', 'sign-in-refused', 'reveal-tin'] as const;
export const AccessActionSchema = z.enum(ACCESS_ACTIONS);
export type AccessAction = z.infer<typeof AccessActionSchema>;

/**
 * What an access-log line is about, one name per kind of record (the table's name where
 * there is one), so the administrator's log never calls one thing by two names.
 * `case-queue` is a filtered set of cases (an export), not one record.
 */
export const ACCESS_RECORD_TYPES = ['case', 'case-queue', 'filing_batch', 'letter', 'reply_upload', 'document_request', 'scoring_profile', 'user', 'saved_view'] as const;
export const AccessRecordTypeSchema = z.enum(ACCESS_RECORD_TYPES);
export type AccessRecordType = z.infer<typeof AccessRecordTypeSchema>;

export const AccessLogEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  userId: z.string().nullable(),
  username: z.string().nullable(),
  role: RoleSchema.nullable(),
  action: AccessActionSchema,
  route: z.string(),
  recordType: z.string().nullable(),
  recordId: z.string().nullable(),
  taxpayerId: z.string().nullable(),
  /** Masked TIN (last 3 digits) of the taxpayer concerned, if any. */
  taxpayerLabel: z.string().nullable(),
  detail: z.string().nullable(),
});
export type AccessLogEntry = z.infer<typeof AccessLogEntrySchema>;

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use YYYY-MM-DD');

export const AccessLogQuerySchema = z.object({
  user: z.string().trim().check(noControlChars()).optional(),
  taxpayer: z.string().trim().check(noControlChars()).optional(),
  from: isoDate.optional(),
  to: isoDate.optional(),
  action: AccessActionSchema.optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
export type AccessLogQuery = z.infer<typeof AccessLogQuerySchema>;

export const AccessLogPageSchema = z.object({
  items: z.array(AccessLogEntrySchema),
  total: z.number().int(),
  page: z.number().int(),
  pageSize: z.number().int(),
});
export type AccessLogPage = z.infer<typeof AccessLogPageSchema>;

/** Shows only the last three digits of a TIN: "••• ••• 123". */
export function maskTin(tin: string): string {
  const digits = tin.replace(/\D/g, '');
  return `••• ••• ${digits.slice(-3).padStart(3, '•')}`;
}
