import { Router } from 'express';
import type { Health } from '../../shared/schemas/api';
import type { AppDeps } from '../app';
import { VERSION } from '../version';

export function healthRoutes(deps: AppDeps): Router {
  const router = Router();
  router.get('/health', async (_req, res, next) => {
    try {
      await deps.database.query('select 1');
      const body: Health = {
        status: 'ok',
        name: 'halfmark',
        version: VERSION,
        database: deps.database.kind,
        demo: Boolean(deps.demo),
      };
      res.json(body);
    } catch (err) {
      next(err);
    }
  });
  return router;
}
