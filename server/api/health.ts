import type { Health } from '../../shared/schemas/api';
import { route } from '../http/routes';
import { VERSION } from '../version';

export const healthRoutes = [
  route({
    method: 'get',
    path: '/health',
    access: 'public',
    summary: 'Liveness: version and database kind.',
    handler: async ({ app }) => {
      await app.database.query('select 1');
      const body: Health = {
        status: 'ok',
        name: 'halfmark',
        version: VERSION,
        database: app.database.kind,
        demo: app.demo,
      };
      return body;
    },
  }),
];
