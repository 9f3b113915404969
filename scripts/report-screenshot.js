#!/usr/bin/env node
/**
 * Makes the README's picture of the HTML report (docs/audit-report.png): audits the bundled
 * demo with `--html`, opens the page in Debian's headless chromium through playwright-core
 * and captures the top of it.
 *
 * Needs the build (npm run build), chromium at /usr/bin/chromium (apt-get install chromium)
 * and the devDependencies. Usage: node scripts/report-screenshot.js
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { chromium } from 'playwright-core';

const repo = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const page = path.join(repo, 'out', 'harbor-props-report.html');
const shot = path.join(repo, 'docs', 'audit-report.png');
const run = spawnSync(process.execPath, [
  path.join(repo, 'bin', 'tanframe.js'), 'audit', 'examples/harbor-props',
  '--fail-on', 'degenerate-uv', '--html', path.relative(repo, page), '--views', 'out/harbor-props-views', '--quiet', '--jobs', '1',
], { cwd: repo, stdio: 'inherit' });
if (run.status !== 1) throw new Error(`expected the demo audit to trip its gate (exit 1), got ${run.status}`);
const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox'] });
try {
  const tab = await browser.newPage({ viewport: { width: 1040, height: 2240 }, deviceScaleFactor: 1 });
  await tab.goto(pathToFileURL(page).href);
  fs.mkdirSync(path.dirname(shot), { recursive: true });
  await tab.screenshot({ path: shot, clip: { x: 0, y: 0, width: 1040, height: 2240 } });
  console.log(`${path.relative(repo, shot)}: ${fs.statSync(shot).size} bytes`);
} finally {
  await browser.close();
}
