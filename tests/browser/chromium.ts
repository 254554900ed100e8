/** Debian's chromium; the test command installs it when missing (tests/run-all.mjs). */
export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';

/**
 * Flags for a closed network: no background connections, no update look-ups, but localhost still resolves.
 * (See stack notes: without the EXCLUDE rules local pages fail to resolve.)
 */
export const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--host-resolver-rules=MAP * ~NOTFOUND, EXCLUDE localhost, EXCLUDE 127.0.0.1',
];
