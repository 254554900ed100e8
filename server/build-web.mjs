// Builds the web export into dist/ (expo export, offline). Used by `npm start` and the browser tests.
import { spawnSync } from 'node:child_process';

const env = { ...process.env, EXPO_OFFLINE: '1', EXPO_NO_TELEMETRY: '1', EXPO_NO_DEPENDENCY_VALIDATION: '1', CI: '1' };
const r = spawnSync('npx', ['expo', 'export', '-p', 'web', '--output-dir', 'dist'], { stdio: 'inherit', env });
process.exit(r.status ?? 1);
