import { Router } from 'express';
import type { AppDeps } from '../app';
import { getHealth } from './health.service';

/** `GET /api/health`: 200 when everything is up, 503 with reasons otherwise. Public. */
export function healthRoutes(deps: AppDeps): Router {
  const r = Router();
  r.get('/health', async (_req, res) => {
    const health = await getHealth(deps);
    res.status(health.status === 'ok' ? 200 : 503).json(health);
  });
  return r;
}
