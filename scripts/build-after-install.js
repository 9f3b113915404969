#!/usr/bin/env node
// Runs after `npm install` / `npm ci` in a clone (the package's own `postprepare` step), and
// in the temporary clone npm makes for a git install (there it installs the devDependencies,
// builds, and packs the result, dist/ included). It never runs for a tarball or registry
// install. Builds dist/ with tsc when TypeScript is installed; without it (an install that
// left out the devDependencies) it says so and skips, so the install still succeeds.
import { spawnSync } from 'node:child_process';
import { createRequire } from 'node:module';

const require = createRequire(import.meta.url);
try {
  require.resolve('typescript/package.json');
} catch {
  console.log('tanframe: TypeScript is not installed (devDependencies left out); dist/ not built (npm install, then npm run build)');
  process.exit(0);
}
const r = spawnSync('npm', ['run', 'build'], { stdio: 'inherit', shell: process.platform === 'win32' });
process.exit(r.status ?? 1);
