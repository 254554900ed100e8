import path from 'node:path';

export interface Config {
  port: number;
  host: string;
  /** PGlite data directory (ignored when databaseUrl is set). */
  dataDir: string;
  databaseUrl?: string;
  /** Folder of the web export the server serves. */
  webDir: string;
  /** Seed the demo lab into an empty database. */
  seedDemo: boolean;
  /** Secret for signing access tokens; a development default is generated per data directory when absent. */
  jwtSecret?: string;
  publicUrl: string;
  production: boolean;
}

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const port = Number(env.PORT ?? 8090);
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`PORT must be a port number, got "${env.PORT}".`);
  const host = env.HOST ?? '127.0.0.1';
  return {
    port,
    host,
    dataDir: path.resolve(env.DATA_DIR ?? './data'),
    databaseUrl: env.DATABASE_URL || undefined,
    webDir: path.resolve(env.WEB_DIR ?? './dist'),
    seedDemo: env.HALFMARK_DEMO !== '0',
    jwtSecret: env.JWT_SECRET || undefined,
    publicUrl: env.PUBLIC_URL ?? `http://localhost:${port}`,
    production: env.NODE_ENV === 'production',
  };
}
