import { existsSync } from 'node:fs';
import compression from 'compression';
import express, { type Express } from 'express';
import helmet from 'helmet';
import type { Database } from '../db/client';
import { apiRouter } from './api';
import { createServerContext, type AuthOptions, type ServerContext } from './auth/context';
import { errorHandler, unknownApiRoute } from './http/errors';
import { API_BODY_LIMIT_BYTES, PUSH_BODY_LIMIT_BYTES } from '../shared/schemas/sync';

export interface AppDeps {
  database: Database;
  /** Folder of the static web export; omitted in API-only tests. */
  webDir?: string;
  demo?: boolean;
  log?: (msg: string, err?: unknown) => void;
  /** Token secret, public URL for e-mail links, clock (server/auth/context.ts). */
  auth?: AuthOptions;
  /** The outbox worker, nudged after an invitation or reset commits (server/mail). */
  mail?: { nudge(): void };
}

/** Builds the Express app; `listen` is the caller's business (server/main.ts), so tests drive it with supertest. */
export function createApp(deps: AppDeps): Express {
  const log = deps.log ?? ((msg, err) => console.error(`[halfmark] ${msg}`, err ?? ''));
  const app = express();
  app.disable('x-powered-by');
  app.set('trust proxy', 'loopback');

  app.use(
    helmet({
      // The local SQLite database runs as wasm in a worker: it needs cross-origin isolation.
      crossOriginOpenerPolicy: { policy: 'same-origin' },
      crossOriginEmbedderPolicy: { policy: 'require-corp' },
      crossOriginResourcePolicy: { policy: 'same-origin' },
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'", "'wasm-unsafe-eval'"],
          // react-native-web injects its style sheet at run time.
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          workerSrc: ["'self'", 'blob:'],
          connectSrc: ["'self'"],
          manifestSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          upgradeInsecureRequests: null,
        },
      },
    }),
  );
  app.use(compression());

  const context = createServerContext({ ...deps, log });
  app.locals.context = context;
  // A CSV import may be up to 5 MB of text (shared/schemas/desk.ts), sent as JSON, and a push up to 4 MB of changes;
  // every other body stays under 2 MB. The first parser to read a body marks it parsed, so the general one then
  // passes it by.
  app.use('/api/labs/:labId/imports', express.json({ limit: '6mb' }));
  app.use('/api/sync/push', express.json({ limit: PUSH_BODY_LIMIT_BYTES }));
  app.use('/api', express.json({ limit: API_BODY_LIMIT_BYTES }), apiRouter({ ...deps, log }, context), unknownApiRoute);

  if (deps.webDir && existsSync(deps.webDir)) {
    const webDir = deps.webDir;
    app.use(
      express.static(webDir, {
        index: 'index.html',
        setHeaders(res, filePath) {
          // Hashed bundles never change; the shell and service worker must be revalidated.
          if (/\/_expo\/static\//.test(filePath) || /\/assets\//.test(filePath)) {
            res.setHeader('Cache-Control', 'public, max-age=31536000, immutable');
          } else {
            res.setHeader('Cache-Control', 'no-cache');
          }
        },
      }),
    );
    // Single-page app: every other page address is the shell; the router decides what to show (including "not
    // found"). A missing file (a path with an extension: a script, the service worker, an image) is a 404, never the
    // shell, so a browser is not handed HTML where it expected a script.
    app.get('/*splat', (req, res, next) => {
      if (req.accepts('html') && !/\.[a-z0-9]+$/i.test(req.path)) {
        res.setHeader('Cache-Control', 'no-cache');
        // With root, only the part below it is checked for dot-segments: a web export under a hidden folder still serves.
        res.sendFile('index.html', { root: webDir });
      } else next();
    });
  }

  app.use((_req, res) => {
    res.status(404).json({ error: { code: 'not_found', message: 'Nothing here.' } });
  });
  app.use(errorHandler(log));
  return app;
}

/** The context the app's routes share (its caches included), for tests and benchmarks that look inside. */
export function serverContextOf(app: Express): ServerContext {
  return app.locals.context as ServerContext;
}
