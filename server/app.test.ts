import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { apiErrorSchema, healthSchema } from '../shared/schemas/api';
import { createApp } from './app';
import { closeTemplate, testDatabase } from './testing/db';
import type { Database } from '../db/client';

let database: Database;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  database = await testDatabase();
  app = createApp({ database, log: () => {} });
});
afterAll(async () => {
  await database.close();
  await closeTemplate();
});

describe('foundation API', () => {
  it('GET /api/health reports version and database kind', async () => {
    const res = await request(app).get('/api/health').expect(200);
    const body = healthSchema.parse(res.body);
    expect(body.database).toBe(process.env.TEST_DATABASE_URL ? 'postgres' : 'pglite');
    expect(body.version).toMatch(/^\d+\.\d+\.\d+/);
  });

  it('answers malformed JSON with 400 in the error shape, without a stack', async () => {
    const res = await request(app).post('/api/health').set('content-type', 'application/json').send('{"a":');
    expect(res.status).toBe(400);
    const body = apiErrorSchema.parse(res.body);
    expect(body.error.code).toBe('malformed_json');
    expect(JSON.stringify(res.body)).not.toMatch(/at .*\.ts:\d+/);
  });

  it('the development mailbox (it holds reset links) is served outside production only', async () => {
    await request(app).get('/api/dev/mailbox').expect(200);
    const production = createApp({ database, log: () => {}, auth: { production: true, jwtSecret: 'production-test-secret-of-sufficient-length-01' } });
    const res = await request(production).get('/api/dev/mailbox').expect(404);
    expect(apiErrorSchema.parse(res.body).error.code).toBe('no_such_route');
  });

  it('answers an unknown API route with 404 in the error shape', async () => {
    const res = await request(app).get('/api/no-such-thing').expect(404);
    expect(apiErrorSchema.parse(res.body).error.code).toBe('no_such_route');
  });

  it('sends cross-origin isolation and security headers', async () => {
    const res = await request(app).get('/api/health');
    expect(res.headers['cross-origin-opener-policy']).toBe('same-origin');
    expect(res.headers['cross-origin-embedder-policy']).toBe('require-corp');
    expect(res.headers['cross-origin-resource-policy']).toBe('same-origin');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['content-security-policy']).toContain("default-src 'self'");
  });
});

describe('serving the web export', () => {
  it('answers page addresses with the shell and missing files with 404, never HTML for a script', async () => {
    const { mkdtempSync, writeFileSync } = await import('node:fs');
    const { tmpdir } = await import('node:os');
    const path = await import('node:path');
    const dir = mkdtempSync(path.join(tmpdir(), 'halfmark-web-'));
    writeFileSync(path.join(dir, 'index.html'), '<!doctype html><title>Halfmark</title>');
    const web = createApp({ database, webDir: dir, log: () => {} });
    const page = await request(web).get('/logbook/some-run').set('accept', 'text/html').expect(200);
    expect(page.text).toContain('<title>Halfmark</title>');
    expect(page.headers['cross-origin-embedder-policy']).toBe('require-corp');
    const script = await request(web).get('/sw-missing.js').set('accept', '*/*');
    expect(script.status).toBe(404);
    expect(script.headers['content-type']).not.toMatch(/text\/html/);
  });
});
