import { Router } from 'express';
import type { AppDeps } from '../app';
import { healthRoutes } from './health';

/** The JSON API. Each area adds its router here. */
export function apiRouter(deps: AppDeps & { log: NonNullable<AppDeps['log']> }): Router {
  const router = Router();
  router.use(healthRoutes(deps));
  return router;
}
