import { Router } from 'express';
import type { AppDeps } from '../app';
import { createServerContext, type ServerContext } from '../auth/context';
import { mountRoutes, type RouteDef } from '../http/routes';
import { devMailboxRoutes } from '../mail/dev-mailbox';
import { authRoutes } from './auth';
import { calibrationRoutes } from './calibrations';
import { deskRoutes } from './desk';
import { healthRoutes } from './health';
import { labRoutes } from './labs';
import { syncRoutes } from './sync';

/**
 * Every API route, declared with its access rule (server/http/routes.ts). Add an area's routes here; the route matrix
 * test lists this array, so a route missing from its expectations fails the build.
 */
export const apiRoutes: RouteDef[] = [...healthRoutes, ...authRoutes, ...labRoutes, ...calibrationRoutes, ...deskRoutes, ...syncRoutes, ...devMailboxRoutes];

/** The JSON API. */
export function apiRouter(deps: AppDeps & { log: NonNullable<AppDeps['log']> }, app: ServerContext = createServerContext(deps)): Router {
  const router = Router();
  mountRoutes(router, apiRoutes.filter((r) => !(r.devOnly && app.production)), app);
  return router;
}
