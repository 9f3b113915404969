/**
 * The rerun of a real asset tree: the demo scenario (examples/harbor-props) and the shared
 * Khronos samples, copied into one temporary folder at test time (never into the repository).
 * A second bake reports every file up-to-date and changes no output's modification time;
 * editing one input runs that file alone. Speed is measured in `npm run bench`, not here.
 */
import { existsSync } from 'node:fs';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { validateGltfFile } from '../helpers/validate.js';
import { STATE_FILE_NAME } from '../../src/lib/runState.js';
import { mtimes } from '../helpers/files.js';

const repo = path.resolve(__dirname, '../..');
const demo = path.join(repo, 'examples/harbor-props');
// Source: the shared Khronos glTF sample assets (MANIFEST.md there lists their licences).
const samples = path.resolve(repo, '../shared/datasets/gltf-samples');
const present = existsSync(samples);
if (!present) console.warn(`SKIPPED: rerun over the demo and the glTF samples: sample assets not found at ${samples}`);

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-rerun-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

async function bake(src: string, out: string): Promise<{ code: number; stderr: string; files: any[]; summary: any }> {
  const r = await runCli(['bake', src, '-o', out, '--jobs', '2', '--json'], tmp);
  const report = JSON.parse(r.stdout);
  return { code: r.code, stderr: r.stderr, files: report.files, summary: report.summary };
}

describe.skipIf(!present)('rerun over the demo and the shared samples', () => {
  it('the second run has every file up-to-date and touches no output; an edited input runs alone', async () => {
    const src = path.join(tmp, 'assets');
    fs.cpSync(demo, path.join(src, 'harbor-props'), { recursive: true });
    fs.cpSync(samples, path.join(src, 'gltf-samples'), { recursive: true });
    // The shared copy is read-only; the test edits one file of its own copy.
    const out = path.join(tmp, 'baked');

    const first = await bake(src, out);
    expect(first.code, first.stderr).toBe(0);
    const inputs = first.files.map((f) => f.input).sort();
    expect(inputs.length).toBeGreaterThan(40);
    for (const f of first.files) expect(f.status, `${f.input}: ${JSON.stringify(f.error)}`).toBe('ok');
    const before = mtimes(out);
    expect(Object.keys(before)).toContain(STATE_FILE_NAME);

    const second = await bake(src, out);
    expect(second.code, second.stderr).toBe(0);
    expect(second.files.map((f) => f.input).sort()).toEqual(inputs);
    for (const f of second.files) expect(f.status, f.input).toBe('up-to-date');
    expect(second.summary.upToDate).toBe(inputs.length);
    expect(mtimes(out)).toEqual(before);

    // Edit one input (trailing whitespace keeps the JSON valid, the bytes change).
    const edited = path.join(src, 'harbor-props', 'crate', 'crate.gltf');
    fs.appendFileSync(edited, '\n');
    const third = await bake(src, out);
    expect(third.code, third.stderr).toBe(0);
    const ran = third.files.filter((f) => f.status !== 'up-to-date').map((f) => f.input);
    expect(ran).toEqual([edited]); // an absolute folder input: its files are shown under it as named
    expect(third.files.find((f) => f.input === ran[0]).status).toBe('ok');

    // Source: Khronos gltf-validator: the demo's outputs after three runs validate with 0 errors.
    const demoOut = path.join(out, 'harbor-props');
    for (const rel of Object.keys(mtimes(demoOut)).filter((p) => /\.(glb|gltf)$/.test(p))) {
      const v = await validateGltfFile(path.join(demoOut, rel));
      expect(v.errors, `${rel}: ${v.messages.join('; ')}`).toBe(0);
    }
  }, 300_000);
});
