// `npm start`: build the web export if the app changed, then run the server (PGlite in ./data by default, demo lab
// seeded into an empty database).
import { spawn, spawnSync } from 'node:child_process';

const build = spawnSync(process.execPath, ['server/build-web.mjs', '--if-stale'], { stdio: 'inherit' });
if (build.status !== 0) process.exit(build.status ?? 1);

// node itself (not npx) runs the server, so Ctrl-C and SIGTERM reach it directly.
const child = spawn(process.execPath, ['--import', 'tsx', 'server/main.ts'], { stdio: 'inherit' });
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => child.kill(sig));
child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
