/**
 * --max-triangles and --file-timeout on the command line: the limit refuses a file before it
 * is decoded (code 'too-large', exit 3) and both options refuse nonsense values.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';

const repo = path.resolve(__dirname, '../..');
// fixtures/values/all-degenerate.gltf: one quad, 2 triangles (scripts/make-bad-fixtures.js).
const quad = path.join('fixtures', 'values', 'all-degenerate.gltf');

describe('--max-triangles', () => {
  it('refuses a file with more triangles than the limit, with too-large and one line', async () => {
    const r = await runCli(['audit', quad, '--max-triangles', '1', '--json'], repo);
    expect(r.code).toBe(3);
    expect(r.stderr).toMatch(/^tanframe: fixtures\/values\/all-degenerate\.gltf: the file holds 2 triangles, more than the limit of 1 \(raise it with --max-triangles\)\n$/);
    const file = JSON.parse(r.stdout).files[0];
    expect(file.error.code).toBe('too-large');
    expect(file.primitives).toEqual([]);
  });

  it('lets a file at the limit through', async () => {
    const r = await runCli(['audit', quad, '--max-triangles', '2', '--quiet'], repo);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
  });

  it('refuses values that are not positive integers', async () => {
    for (const v of ['0', '-5', '1.5', 'many']) {
      const r = await runCli(['audit', quad, '--max-triangles', v], repo);
      expect(r.code, v).toBe(2);
      expect(r.stderr, v).toMatch(/--max-triangles/);
    }
  });
});

describe('--file-timeout', () => {
  it('refuses values that are not non-negative numbers', async () => {
    for (const v of ['-1', 'soon', '']) {
      const r = await runCli(['audit', quad, '--file-timeout', v], repo);
      expect(r.code, v).toBe(2);
      expect(r.stderr, v).toMatch(/--file-timeout/);
    }
  });
});

describe('--jobs', () => {
  it('is capped at the cores available: more threads would only add memory', async () => {
    const { threadCount } = await import('../../src/cli/batch.js');
    const cores = os.availableParallelism();
    expect(threadCount({ jobs: 100 })).toBe(Math.min(100, cores));
    expect(threadCount({ jobs: 1 })).toBe(1);
    expect(threadCount({})).toBe(cores);
  });
});

describe('failure messages', () => {
  it('a reason quoting megabytes of hostile JSON is cut to one short line', async () => {
    // The reader quotes the offending value; here it is a 2 MB string.
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-msg-'));
    try {
      const json = JSON.parse(fs.readFileSync(path.join(repo, quad), 'utf8'));
      json.accessors[0].componentType = 'x'.repeat(2_000_000);
      fs.writeFileSync(path.join(dir, 'long.gltf'), JSON.stringify(json));
      const r = await runCli(['audit', 'long.gltf', '--json'], dir);
      expect(r.code).toBe(3);
      const lines = r.stderr.split('\n').filter((l) => l !== '');
      expect(lines).toHaveLength(1);
      expect(lines[0]).toMatch(/^tanframe: long\.gltf: accessor 0: componentType "xxx/);
      expect(lines[0].length).toBeLessThan(1100);
      const error = JSON.parse(r.stdout).files[0].error;
      expect(error.code).toBe('bad-accessor');
      expect(error.message.length).toBeLessThanOrEqual(1000);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

