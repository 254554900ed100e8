import { eq } from 'drizzle-orm';
import type { Response } from 'express';
import { labs } from '../../db/schema';
import type { RunDetail } from '../../shared/schemas/desk';
import { route } from '../http/routes';
import * as desk from '../services/runs-desk';
import * as exportsService from '../services/runs-exports';
import { runLab } from './runs';

const ALL = ['manager', 'analyst', 'viewer'] as const;

function fileName(sample: string, runId: string, ext: string) {
  const safe = sample.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '').slice(0, 60) || 'run';
  return `${safe}-${runId.slice(0, 8)}.${ext}`;
}

function send(res: Response, type: string, name: string, body: string | Buffer) {
  res.setHeader('Content-Type', type);
  res.setHeader('Content-Disposition', `attachment; filename="${name}"`);
  res.status(200).send(body);
}

const csvRoute = (kind: 'readings' | 'results', summary: string, make: (d: RunDetail) => string) =>
  route({
    method: 'get',
    path: `/runs/:runId/export/${kind}.csv`,
    access: ALL,
    labOf: runLab,
    summary,
    handler: async ({ app, caller, lab, params, res }) => {
      const d = await desk.runDetail(app, caller!, lab!.id, params.runId);
      send(res, 'text/csv; charset=utf-8', fileName(d.run.sampleName, d.run.id, `${kind}.csv`), make(d));
    },
  });

export const exportRoutes = [
  csvRoute('readings', 'CSV of the run’s readings and corrections (formula-safe text, numbers as numbers).', exportsService.readingsCsv),
  csvRoute('results', 'CSV of the run’s results with uncertainties and methods.', exportsService.resultsCsv),
  route({
    method: 'get',
    path: '/runs/:runId/export/report.pdf',
    access: ALL,
    labOf: runLab,
    summary: 'PDF run report: plot, results, calibrations, approval, readings.',
    handler: async ({ app, caller, lab, params, res }) => {
      const d = await desk.runDetail(app, caller!, lab!.id, params.runId);
      const [labRow] = await app.database.db.select({ name: labs.name }).from(labs).where(eq(labs.id, lab!.id));
      const pdf = await exportsService.reportPdf(d, { labName: labRow?.name ?? '', generatedAt: app.now() });
      send(res, 'application/pdf', fileName(d.run.sampleName, d.run.id, 'pdf'), pdf);
    },
  }),
];
