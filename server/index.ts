import http from 'node:http';
import type { AddressInfo } from 'node:net';
import express from 'express';
import session from 'express-session';
import { csrfProtection } from './auth/csrf';
import { createGuard } from './auth/guard';
import { createPassport } from './auth/passport';
import { createPasswordHasher, PRODUCTION_BCRYPT_COST } from './auth/passwords';
import { SqliteSessionStore } from './auth/session-store';
import type { AppContext } from './context';
import { defaultDbPath, openDb, type DbHandle } from './db/client';
import { mountViteDev, serveBuiltClient } from './http/client';
import { apiNotFound, errorHandler } from './http/errors';
import { createRateLimits, DEFAULT_RATE_LIMITS, type RateLimitOptions } from './http/rate-limits';
import { securityHeaders } from './http/security';
import { chooseMailMode, createMailer } from './mail/mailer';
import { captureRoutes } from './routes/captures';
import { compareRoutes } from './routes/compare';
import { discoveryRoutes } from './routes/discovery';
import { exchangeRoutes } from './routes/exchanges';
import { faultRoutes } from './routes/faults';
import { timingRoutes } from './routes/timing';
import { fieldMapRoutes } from './routes/field-maps';
import { fileRoutes } from './routes/files';
import { invitationRoutes } from './routes/invitations';
import { mailboxRoutes } from './routes/mailbox';
import { memberRoutes } from './routes/members';
import { noteRoutes } from './routes/notes';
import { passwordResetRoutes } from './routes/password-resets';
import { rigRoutes } from './routes/rigs';
import { sessionRoutes } from './routes/session';
import { stationRoutes } from './routes/stations';
import { seedDemo } from './seed/demo';
import { seedDemoCaptures, seedOtherDemoCaptures } from './seed/demo-captures';
import { deleteRigCaptures } from './services/captures/delete';
import { createCaptureModule } from './services/captures/module';
import { createCallsModule } from './services/calls/module';
import { sessionSecret } from './services/settings';

export interface AppOptions {
  /** an open database (tests); otherwise `dbPath` (default FLAGLINE_DB or data/flagline.db) is opened */
  db?: DbHandle;
  dbPath?: string;
  /** seeds the demo on an empty database and shows the demo accounts on the sign-in page */
  demo?: boolean;
  /** Vite middleware instead of the built client */
  dev?: boolean;
  /** base of links in e-mails (default FLAGLINE_PUBLIC_URL, else http://localhost:PORT) */
  publicUrl?: string;
  /** bcrypt cost; 12 unless given here or in FLAGLINE_BCRYPT_COST (tests use 4) */
  bcryptCost?: number;
  rateLimit?: Partial<RateLimitOptions>;
  /** FLAGLINE_SMTP_URL unless given; '' means none */
  smtpUrl?: string;
  /** without SMTP, keep mail in the development mailbox (default: in demo or development mode; otherwise mail is off) */
  mailbox?: boolean;
  /** Express "trust proxy" (default FLAGLINE_TRUST_PROXY or 'loopback'): decides when a request counts as https */
  trustProxy?: string | boolean | number;
  /** folder of stored captures and upload temp files (default FLAGLINE_DATA_DIR or data/) */
  dataDir?: string;
  /** upload size limit in bytes (default FLAGLINE_MAX_UPLOAD_BYTES or 2 GB) */
  maxUploadBytes?: number;
  /** read pool threads for the timeline's long reads (default FLAGLINE_READ_THREADS, else from the cores; 0: on the request thread) */
  readThreads?: number;
  /** with `demo`: load samples/ into the demo rig and decode them (default: on when the database is a file) */
  demoCaptures?: boolean;
}

const SESSION_MAX_AGE_MS = 14 * 24 * 60 * 60 * 1000;
const JSON_BODY_LIMIT = '100kb';
const FIELD_MAP_BODY_LIMIT = '2mb';

/** FLAGLINE_TRUST_PROXY: 'true'/'false', a hop count, or addresses/names as Express takes them */
function trustProxyFromEnv(): string | boolean | number | undefined {
  const raw = process.env.FLAGLINE_TRUST_PROXY?.trim();
  if (!raw) return undefined;
  if (raw === 'true' || raw === 'false') return raw === 'true';
  if (/^\d+$/.test(raw)) return Number(raw);
  return raw;
}

function envNumber(name: string): number | undefined {
  const raw = process.env[name];
  return raw && /^\d+$/.test(raw) ? Number(raw) : undefined;
}

export async function createApp(opts: AppOptions = {}) {
  const handle = opts.db ?? openDb(opts.dbPath ?? defaultDbPath());
  const ownsDb = !opts.db;
  const dev = opts.dev ?? false;
  const hasher = createPasswordHasher(opts.bcryptCost ?? envNumber('FLAGLINE_BCRYPT_COST') ?? PRODUCTION_BCRYPT_COST);
  const sessionStore = new SqliteSessionStore(handle.db);
  const limits = createRateLimits({ ...DEFAULT_RATE_LIMITS, ...opts.rateLimit });
  const smtpUrl = opts.smtpUrl ?? process.env.FLAGLINE_SMTP_URL;
  const mailMode = chooseMailMode({ smtpUrl, mailbox: opts.mailbox ?? Boolean(opts.demo || dev) });
  const ctx: AppContext = {
    db: handle.db,
    hasher,
    mailer: createMailer(handle.db, { mode: mailMode, smtpUrl, limits: limits.mail, log: dev ? (m) => console.log(m) : undefined }),
    sessionStore,
    publicUrl: (opts.publicUrl ?? process.env.FLAGLINE_PUBLIC_URL ?? `http://localhost:${process.env.PORT || 3000}`).replace(/\/+$/, ''),
    demo: opts.demo ?? false,
  };
  const seeded = ctx.demo ? await seedDemo(handle.db, hasher) : null;
  const captureModule = createCaptureModule({ db: handle.db, sqlite: handle.sqlite, dbPath: handle.path, dataDir: opts.dataDir, maxUploadBytes: opts.maxUploadBytes, readThreads: opts.readThreads });
  // decode workers open the database by path, so an in-memory database cannot take the demo captures
  if (seeded && (opts.demoCaptures ?? handle.path !== ':memory:')) {
    // the main rig's captures first: the one decode queue takes them in order
    await seedDemoCaptures(captureModule, seeded.rigId, seeded.ownerId);
    for (const other of seeded.otherRigs) await seedOtherDemoCaptures(captureModule, other.key, other.rigId, seeded.ownerId);
  }

  const callsModule = createCallsModule(captureModule);
  const passport = createPassport(ctx);
  const guard = createGuard(ctx);

  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', opts.trustProxy ?? trustProxyFromEnv() ?? 'loopback');
  app.use(securityHeaders(dev));

  const api = express.Router();
  api.use((_req, res, next) => {
    res.setHeader('Cache-Control', 'no-store');
    next();
  });
  // field-map documents are larger than forms: the built-in map alone is about 50 KB
  api.use('/rigs/:rigId/field-maps', express.json({ limit: FIELD_MAP_BODY_LIMIT }));
  api.use(express.json({ limit: JSON_BODY_LIMIT }));
  const secret = sessionSecret(handle.db);
  api.use(
    session({
      name: 'flagline.sid',
      secret,
      store: sessionStore,
      resave: false,
      saveUninitialized: false,
      // sliding expiry: each response renews the cookie, and touch() renews the stored row
      rolling: true,
      cookie: { httpOnly: true, sameSite: 'lax', secure: 'auto', maxAge: SESSION_MAX_AGE_MS },
    }),
  );
  api.use(passport.initialize());
  api.use(passport.session());
  api.use(csrfProtection(secret));
  api.use(sessionRoutes(ctx, guard, passport, limits));
  api.use(passwordResetRoutes(ctx, limits));
  api.use(invitationRoutes(ctx, guard));
  api.use(rigRoutes(ctx, guard, (rigId) => deleteRigCaptures(captureModule, rigId)));
  api.use(stationRoutes(ctx, guard));
  api.use(memberRoutes(ctx, guard));
  api.use(mailboxRoutes(ctx, guard));
  api.use(captureRoutes(captureModule, guard));
  api.use(discoveryRoutes(captureModule, guard));
  api.use(fieldMapRoutes(callsModule, guard));
  api.use(exchangeRoutes(callsModule, guard));
  api.use(fileRoutes(callsModule, guard));
  api.use(compareRoutes(callsModule, guard));
  api.use(faultRoutes(captureModule, guard));
  api.use(timingRoutes(callsModule, guard));
  api.use(noteRoutes(captureModule, guard));
  api.use(apiNotFound);
  app.use('/api', api);

  let vite: { close(): Promise<void> } | undefined;
  if (dev) vite = await mountViteDev(app);
  else serveBuiltClient(app);
  app.use(errorHandler);

  return {
    app,
    db: handle,
    ctx,
    /** the decode queue (tests wait on it and simulate crashes through it) */
    jobs: captureModule.jobs,
    /** the queue of call-only re-runs after a map change (tests wait on it) */
    calls: callsModule.calls,
    /** the timeline's long reads: the read pool, or in-thread (tests check which) */
    reads: captureModule.reads,
    close() {
      callsModule.calls.close();
      void captureModule.jobs.close();
      void captureModule.reads.close();
      sessionStore.close();
      void vite?.close();
      if (ownsDb) handle.close();
    },
  };
}

export type FlaglineApp = Awaited<ReturnType<typeof createApp>>;

export interface ServerOptions extends Omit<AppOptions, 'db' | 'dbPath'> {
  /** 0 picks a free port */
  port: number;
  dbPath: string;
  demo: boolean;
  /** interface to listen on (default: all, IPv4 and IPv6) */
  host?: string;
}

export async function startServer(opts: ServerOptions): Promise<{ url: string; close(): Promise<void> }> {
  const flagline = await createApp(opts);
  const server = http.createServer(flagline.app);
  try {
    await new Promise<void>((resolve, reject) => {
      server.once('error', reject);
      // no host: Node listens dual-stack, so both localhost → ::1 and → 127.0.0.1 reach it
      if (opts.host) server.listen(opts.port, opts.host, resolve);
      else server.listen(opts.port, resolve);
    });
  } catch (err) {
    flagline.close();
    throw err;
  }
  const { port } = server.address() as AddressInfo;
  const url = `http://localhost:${port}`;
  if (!opts.publicUrl && !process.env.FLAGLINE_PUBLIC_URL) flagline.ctx.publicUrl = url;
  return {
    url,
    close: () =>
      new Promise<void>((resolve, reject) => {
        server.close((err) => {
          flagline.close();
          if (err) reject(err);
          else resolve();
        });
        server.closeAllConnections();
      }),
  };
}
