/**
 * createApp(): the Express application without listen(), so tests drive it with supertest
 * and main.ts serves it.
 */
import express, { type Express } from 'express';
import fs from 'node:fs';
import path from 'node:path';
import helmet from 'helmet';
import type { AppDeps } from './app-deps';
import { accessLogRoutes } from './access-log/access-log.routes';
import { auditContext } from './access-log/audit-context';
import { analysesRoutes } from './analyses/analyses.routes';
import { caseAnalysesRoutes } from './analyses/case-analyses.routes';
import { scoringProfileRoutes } from './scoring/scoring-profile.routes';
import { authRoutes } from './auth/auth.routes';
import { batchRoutes } from './batches/batch.routes';
import { caseRoutes } from './cases/case.routes';
import { caseQueueRoutes } from './cases/case-queue.routes';
import { savedViewRoutes } from './saved-views/saved-views.routes';
import { workloadRoutes } from './cases/workload.routes';
import { housekeepingRoutes } from './housekeeping/housekeeping.routes';
import { programmeRoutes } from './programme/programme.routes';
import { csrfProtection } from './auth/csrf';
import { createPassport, sessionMiddleware } from './auth/session';
import { LoginThrottle } from './auth/throttle';
import { healthRoutes } from './health/health.routes';
import { letterRoutes } from './letters/letters.routes';
import { replyRoutes } from './letters/replies.routes';
import { userRoutes } from './users/user.routes';
import { openapiRoutes } from './openapi/openapi.routes';
import { apiNotFound, errorHandler } from './http/errors';

/** Builds the application. */
export function createApp(deps: AppDeps): Express {
  const app = express();
  app.disable('x-powered-by');
  // Only a configured proxy may speak for the client; otherwise req.ip is the socket address.
  app.set('trust proxy', deps.config.TRUST_PROXY);
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: true,
        directives: {
          // react-native-web writes inline styles; scripts stay same-origin only.
          'style-src': ["'self'", "'unsafe-inline'"],
          'img-src': ["'self'", 'data:', 'blob:'],
          'font-src': ["'self'", 'data:'],
          'upgrade-insecure-requests': null,
        },
      },
    }),
  );
  app.use('/api', express.json({ limit: '1mb' }));
  app.use('/api', express.urlencoded({ extended: false, limit: '100kb' }));

  const passport = createPassport(deps.dataSource);
  const throttle = deps.throttle ?? new LoginThrottle(deps.dataSource);
  const api = express.Router();
  api.use(sessionMiddleware(deps.config, deps.dataSource));
  api.use(passport.initialize());
  api.use(passport.session());
  api.use(csrfProtection);
  api.use(auditContext);
  // Feature routers: each built with secureRouter(), paths are full paths under /api; each
  // takes only the dependencies it uses.
  const { config, dataSource, boss, mailer } = deps;
  api.use(healthRoutes({ dataSource, boss, mailer }));
  api.use(authRoutes({ dataSource, throttle, passport }));
  api.use(userRoutes({ dataSource, throttle }));
  api.use(accessLogRoutes({ dataSource }));
  api.use(analysesRoutes({ dataSource }));
  api.use(caseAnalysesRoutes({ dataSource }));
  api.use(scoringProfileRoutes({ dataSource, boss }));
  api.use(batchRoutes({ config, dataSource, boss }));
  api.use(caseRoutes({ dataSource, letters: { dataSource, mailer, publicUrl: config.publicUrl } }));
  api.use(caseQueueRoutes({ dataSource }));
  api.use(savedViewRoutes({ dataSource }));
  api.use(workloadRoutes({ dataSource }));
  api.use(housekeepingRoutes({ dataSource, mailer, publicUrl: config.publicUrl }));
  api.use(programmeRoutes({ dataSource }));
  api.use(letterRoutes({ dataSource, mailer, publicUrl: config.publicUrl }));
  api.use(replyRoutes({ dataSource, mailer, publicUrl: config.publicUrl }));
  api.use(openapiRoutes());
  app.use('/api', api);
  app.use('/api', apiNotFound);

  serveWebBuild(app, deps.config.WEB_DIST);
  app.use(errorHandler);
  return app;
}

/**
 * Serves the exported web app and, for any other GET, its index.html (single-page
 * output: the router runs in the browser). Express 5 has no bare `*`, hence app.use.
 * Each screen's code is a file of its own under /_expo/static/js/, fetched on the first
 * visit (docs/design.md#web-bundle); the CSP's default 'self' already allows those scripts.
 */
function serveWebBuild(app: Express, dist: string): void {
  const index = path.join(dist, 'index.html');
  app.use(express.static(dist, { index: false, maxAge: '1h', setHeaders: noCacheForHtml }));
  app.use((req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next();
    // A script the build does not hold (a screen's chunk named by an older build still open in
    // a tab) is a 404, not the page: HTML in its place would fail as a script with no clear
    // reason, while a 404 lets the router's error screen say the screen could not be loaded.
    if (req.path.startsWith('/_expo/')) {
      res.status(404).type('text/plain').send(`No such file in the web build: ${req.path}. Reload the page to get the current build.`);
      return;
    }
    if (!fs.existsSync(index)) {
      res.status(503).type('text/plain').send('The web app has not been built yet. Run `npm start` (it builds it) or `npm run build:web`.');
      return;
    }
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(index);
  });
}

function noCacheForHtml(res: express.Response, file: string) {
  if (file.endsWith('.html')) res.setHeader('Cache-Control', 'no-cache');
}
