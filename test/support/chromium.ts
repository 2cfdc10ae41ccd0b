/**
 * Where the browser tests find Chromium: CHROMIUM_PATH, or Debian's /usr/bin/chromium. No
 * browser is ever downloaded. Without one the browser suites are skipped with one line saying
 * how to install it, unless REQUIRE_BROWSER=1 (as CI sets), where that is an error.
 */
import fs from 'node:fs';

export const CHROMIUM_PATH = process.env['CHROMIUM_PATH'] ?? '/usr/bin/chromium';

function isExecutable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return fs.statSync(file).isFile();
  } catch {
    return false;
  }
}

/** Whether the browser suites can run here. */
export const CHROMIUM_AVAILABLE = isExecutable(CHROMIUM_PATH);

if (!CHROMIUM_AVAILABLE) {
  if (process.env['REQUIRE_BROWSER'] === '1') {
    throw new Error(`REQUIRE_BROWSER=1 but there is no Chromium at ${CHROMIUM_PATH}: install it (apt-get install chromium) or set CHROMIUM_PATH`);
  }
  console.warn(`!!! SKIPPING THE BROWSER TESTS: no Chromium at ${CHROMIUM_PATH}. Install it with \`apt-get install chromium\` (or set CHROMIUM_PATH to one). !!!`);
}
