/**
 * The two local set-ups: `npm start` (demo data) and `npm test` (throw-away data).
 * They use different data folders and ports, so both can run at the same time.
 */
import path from 'node:path';
import type { ClusterSpec } from './pg';

export const projectRoot = path.resolve(__dirname, '..', '..');

/** Addresses one set-up uses. */
export interface LocalSetup {
  cluster: ClusterSpec;
  smtpPort: number;
  mailWebPort: number;
  httpPort: number;
  maildevDir: string;
}

/** The start command's services (the defaults in README.md, "What runs where"). */
export const startSetup: LocalSetup = {
  cluster: {
    dataDir: path.join(projectRoot, '.pg', 'data'),
    port: Number(process.env.PLUMBLINE_PG_PORT ?? 54329),
    database: 'plumbline',
    // The cluster's superuser (creates databases and roles only); the owner runs migrations;
    // the server and worker log in as the application role (server/db/roles.ts).
    user: 'plumbline',
    password: 'plumbline-local',
    owner: { user: 'plumbline_owner', password: 'plumbline-owner-local' },
    app: { user: 'plumbline_app', password: 'plumbline-app-local' },
  },
  smtpPort: Number(process.env.SMTP_PORT ?? 1025),
  mailWebPort: Number(process.env.MAILDEV_WEB_PORT ?? 1080),
  httpPort: Number(process.env.PORT ?? 8080),
  maildevDir: path.join(projectRoot, '.data', 'maildev'),
};

const TEST_PG_PORT = 54339;
/**
 * PLUMBLINE_TEST_PG_PORT gives a test run a cluster of its own beside the usual one: its own
 * port and data folder (one data folder serves one running PostgreSQL only), in this checkout
 * or another.
 */
const testPgPort = Number(process.env.PLUMBLINE_TEST_PG_PORT ?? TEST_PG_PORT);

/** The test command's services: own data folder and ports, never the demo data. */
export const testSetup: LocalSetup = {
  cluster: {
    dataDir: testPgPort === TEST_PG_PORT ? path.join(projectRoot, '.pg-test', 'data') : path.join(projectRoot, '.pg-test', `port-${testPgPort}`, 'data'),
    port: testPgPort,
    database: 'plumbline_test',
    // The cluster's superuser (creates databases and roles only); the owner runs migrations;
    // the server and worker log in as the application role (server/db/roles.ts).
    user: 'plumbline',
    password: 'plumbline-local',
    owner: { user: 'plumbline_owner', password: 'plumbline-owner-local' },
    app: { user: 'plumbline_app', password: 'plumbline-app-local' },
  },
  smtpPort: 1026,
  mailWebPort: 1081,
  httpPort: 8089,
  maildevDir: path.join(projectRoot, '.data', 'maildev-test'),
};
