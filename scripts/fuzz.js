#!/usr/bin/env node
/**
 * `npm run fuzz`: the property-based fuzzer (test/io/fuzz.test.ts) with 10,000 cases per
 * property (four properties: 40,000 cases in all) instead of the few hundred `npm test` runs,
 * then the cost-growth tests (test/cost/) at four times their `npm test` sizes (COST_SCALE).
 * FUZZ_RUNS and FUZZ_SEED override the case count and the seed, COST_SCALE the size factor.
 * The cost tests run the built library: build first (`npm run build`).
 */
import { spawnSync } from 'node:child_process';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const env = { ...process.env, FUZZ_RUNS: process.env.FUZZ_RUNS ?? '10000', COST_SCALE: process.env.COST_SCALE ?? '4' };
const vitest = path.join(repoRoot, 'node_modules', 'vitest', 'vitest.mjs');
const r = spawnSync(process.execPath, [vitest, 'run', 'test/io/fuzz.test.ts'], { cwd: repoRoot, env, stdio: 'inherit' });
if (r.status !== 0) process.exit(r.status ?? 1);
const c = spawnSync(process.execPath, [vitest, 'run', 'test/cost/'], { cwd: repoRoot, env, stdio: 'inherit' });
process.exit(c.status ?? 1);
