// The worker pool: answers in job order, a thread that dies fails only its own file, and
// threads that cannot start stop the run with a clear error.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TS_WORKER } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { runInWorkers } from '../../src/cli/pool.js';
import { runFiles } from '../../src/cli/runFiles.js';
import { defaultProcessOptions } from '../../src/lib/options.js';
import type { FileJob, FileOutcome } from '../../src/lib/processFile.js';
import { TanframeError } from '../../src/mesh/errors.js';

let tmp = '';
const jobs: FileJob[] = [];
beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-pool-'));
  for (const name of ['a', 'b-crash-me', 'c', 'd']) {
    const g = gridAsset(2 + jobs.length);
    if (name === 'c') setCornerUv(g, 1, 2, cornerUv(g, 1, 0)); // one degenerate UV triangle: a picture
    const file = await writeGridGlb(tmp, name, g);
    jobs.push({ command: 'audit', input: file, output: null, format: null, dryRun: true, displayInput: `${name}.glb`, displayOutput: null });
  }
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('runInWorkers', () => {
  it('aThreadThatDiesFailsItsOwnFileAndTheRestGoOn', async () => {
    const got = new Map<number, FileOutcome>();
    const script = new URL('../helpers/crashingWorker.mjs', import.meta.url);
    await runInWorkers(jobs, defaultProcessOptions(), 2, script, (i, o) => {
      expect(got.has(i)).toBe(false); // once per job
      got.set(i, o);
    });
    expect([...got.keys()].sort()).toEqual([0, 1, 2, 3]);
    const crashed = got.get(1)!.report;
    expect(crashed.status).toBe('failed');
    expect(crashed.error).toEqual({ code: 'internal', message: 'its worker thread stopped: exit code 3' });
    for (const i of [0, 2, 3]) {
      const r = got.get(i)!.report;
      expect(r.status, r.input).toBe('ok');
      expect(r.primitives[0].triangles).toBe(2 * (2 + i) * (2 + i));
    }
  });

  it('threadsThatCannotLoadStopTheRun', async () => {
    const script = new URL('../helpers/brokenWorker.mjs', import.meta.url);
    const err = await runInWorkers(jobs, defaultProcessOptions(), 2, script, () => {}).catch((e) => e);
    expect(err).toBeInstanceOf(TanframeError);
    expect(err.message).toMatch(/^cannot start worker threads: /);
    const missing = new URL('file:///nonexistent/worker.js');
    const err2 = await runInWorkers(jobs, defaultProcessOptions(), 2, missing, () => {}).catch((e) => e);
    expect(err2.message).toMatch(/worker script .* is missing/);
  });
});

describe('runFiles', () => {
  it('returnsReportsAndPicturesInJobOrderWhateverTheThreads', async () => {
    const ok = jobs.filter((j) => !j.input.includes('crash-me')).map((j) => ({ ...j, pictures: true }));
    const order: number[] = [];
    const pictures: number[] = [];
    const progress: number[] = [];
    const reports = await runFiles(ok, defaultProcessOptions(), {
      threads: 3,
      workerScript: TS_WORKER,
      onPictures: (i, list) => { order.push(i); pictures.push(list.length); },
      onProgress: (done, total) => { progress.push(done); expect(total).toBe(3); },
    });
    expect(reports.map((r) => r.input)).toEqual(['a.glb', 'c.glb', 'd.glb']);
    expect(order).toEqual([0, 1, 2]);
    expect(pictures).toEqual([0, 1, 0]); // only c has a finding, so only c has a picture
    expect(progress).toEqual([1, 2, 3]);
    const inProcess = await runFiles(ok, defaultProcessOptions(), 1);
    const strip = (x: unknown) => JSON.stringify(x, (k, v) => (k === 'seconds' ? undefined : v));
    expect(strip(inProcess)).toBe(strip(reports));
  });
});
