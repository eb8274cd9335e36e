/**
 * The health report: the one contract between `GET /api/health` and the status screen.
 */
import { z } from 'zod';

/** One dependency's state, with a reason a person can act on when it is down. */
export const HealthCheckSchema = z.object({
  ok: z.boolean(),
  /** What was checked or why it failed, e.g. "connection refused on 127.0.0.1:54329". */
  detail: z.string(),
  latencyMs: z.number().nonnegative().nullable(),
});
export type HealthCheck = z.infer<typeof HealthCheckSchema>;

export const HealthResponseSchema = z.object({
  status: z.enum(['ok', 'degraded']),
  version: z.string(),
  time: z.string(),
  checks: z.object({
    database: HealthCheckSchema,
    queue: HealthCheckSchema,
    mail: HealthCheckSchema,
  }),
});
export type HealthResponse = z.infer<typeof HealthResponseSchema>;
