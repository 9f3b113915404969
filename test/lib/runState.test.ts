/**
 * The state of earlier bakes (.tanframe-state.json in the -o folder): an unchanged input is
 * reported up-to-date and nothing is rewritten; a changed input, option, referenced file,
 * tool version, or an output edited or deleted by hand runs the file again; --force ignores
 * the state; a corrupt, foreign or forged state is ignored with a warning; files that failed
 * or tripped a gate are never recorded; the state is never one of the run's inputs.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { buildGltf, writeGltf, unitQuad } from '../helpers/gltfBuilder.js';
import { STATE_FILE_NAME, STATE_SCHEMA } from '../../src/lib/runState.js';
import { mtimes } from '../helpers/files.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-state-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

// A normal-mapped quad as .gltf + .bin + an external normal map, two triangles:
//   3 ---- 2
//   |    / |
//   0 ---- 1
async function writeQuadGltf(dir: string, name: string): Promise<string> {
  const prim = unitQuad();
  const a = buildGltf([prim]);
  a.json.materials[0].normalTexture = { index: 0 };
  a.json.textures = [{ source: 0 }];
  a.json.images = [{ uri: 'maps/normal.png' }];
  fs.mkdirSync(path.join(dir, 'maps'), { recursive: true });
  fs.writeFileSync(path.join(dir, 'maps', 'normal.png'), new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3]));
  return writeGltf(dir, name, a.json, a.bin);
}

// One OBJ triangle with a material library naming a normal map.
function writeObj(dir: string): void {
  fs.mkdirSync(dir, { recursive: true });
  fs.writeFileSync(path.join(dir, 'tri.obj'), 'mtllib tri.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nvn 0 0 1\nusemtl m\nf 1/1/1 2/2/1 3/3/1\n');
  fs.writeFileSync(path.join(dir, 'tri.mtl'), 'newmtl m\nmap_Bump tri_n.png\n');
  fs.writeFileSync(path.join(dir, 'tri_n.png'), new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 7]));
}

/** A source folder: two GLB grids, a .gltf with .bin and image, an OBJ with its MTL. */
async function source(name: string): Promise<string> {
  const dir = path.join(tmp, name);
  await writeGridGlb(dir, 'a', gridAsset(1));
  await writeGridGlb(path.join(dir, 'sub'), 'b', gridAsset(2));
  await writeQuadGltf(path.join(dir, 'quad'), 'quad');
  writeObj(path.join(dir, 'obj'));
  return dir;
}

interface Run {
  code: number;
  stderr: string;
  status: Record<string, string>;
  summary: any;
}

async function bake(src: string, out: string, ...extra: string[]): Promise<Run> {
  const r = await runCli(['bake', src, '-o', out, '--json', '--jobs', '1', '--file-timeout', '0', ...extra], tmp);
  const report = JSON.parse(r.stdout);
  const status: Record<string, string> = {};
  for (const f of report.files) status[path.relative(src, path.resolve(tmp, f.input)).split(path.sep).join('/')] = f.status;
  return { code: r.code, stderr: r.stderr, status, summary: report.summary };
}

const ALL = ['a.glb', 'obj/tri.obj', 'quad/quad.gltf', 'sub/b.glb'];

function only(status: Record<string, string>, ran: string[]): Record<string, string> {
  return Object.fromEntries(ALL.map((f) => [f, ran.includes(f) ? 'ok' : 'up-to-date']));
}

describe('a rerun with nothing changed', () => {
  it('reports every file up-to-date and rewrites nothing, the state file included', async () => {
    const src = await source('same');
    const out = path.join(tmp, 'same-out');
    const first = await bake(src, out);
    expect(first.code, first.stderr).toBe(0);
    expect(Object.values(first.status)).toEqual(['ok', 'ok', 'ok', 'ok']);
    expect(fs.existsSync(path.join(out, STATE_FILE_NAME))).toBe(true);
    const before = mtimes(out);
    const second = await bake(src, out);
    expect(second.code, second.stderr).toBe(0);
    expect(second.stderr).toBe('');
    expect(second.status).toEqual(only(second.status, []));
    expect(second.summary.upToDate).toBe(4);
    expect(second.summary.ok).toBe(0);
    expect(mtimes(out)).toEqual(before);
  });

  it('keeps a file up-to-date when only its modification time changed (the state compares bytes)', async () => {
    const src = await source('touched');
    const out = path.join(tmp, 'touched-out');
    await bake(src, out);
    const later = new Date(Date.now() + 60_000);
    fs.utimesSync(path.join(src, 'a.glb'), later, later);
    expect((await bake(src, out)).status).toEqual(only({}, []));
  });

  it('prints up-to-date files in the summary and counts them', async () => {
    const src = await source('summary');
    const out = path.join(tmp, 'summary-out');
    await bake(src, out);
    const r = await runCli(['bake', src, '-o', out, '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.stdout).toMatch(/^up-to-date +.*a\.glb -> /m);
    expect(r.stdout).toMatch(/4 up-to-date/); // the total line (summary.ts) says "up-to-date", as the file lines do
  });
});

describe('what runs a file again', () => {
  it('a changed input runs that file alone', async () => {
    const src = await source('changed-input');
    const out = path.join(tmp, 'changed-input-out');
    await bake(src, out);
    const g = gridAsset(1);
    setCornerUv(g, 0, 0, [0.1, 0.9]);
    await writeGridGlb(src, 'a', g);
    const r = await bake(src, out);
    expect(r.status).toEqual(only(r.status, ['a.glb']));
    // ... and the new record holds: the next run has nothing to do.
    expect((await bake(src, out)).status).toEqual(only({}, []));
  });

  it('a changed buffer or image of a .gltf runs it again', async () => {
    const src = await source('changed-ref');
    const out = path.join(tmp, 'changed-ref-out');
    await bake(src, out);
    fs.appendFileSync(path.join(src, 'quad', 'maps', 'normal.png'), new Uint8Array([9]));
    expect((await bake(src, out)).status).toEqual(only({}, ['quad/quad.gltf']));
    const bin = path.join(src, 'quad', 'quad.bin');
    const bytes = fs.readFileSync(bin);
    bytes[0] ^= 1;
    fs.writeFileSync(bin, bytes);
    expect((await bake(src, out)).status).toEqual(only({}, ['quad/quad.gltf']));
  });

  it("a changed material library of an OBJ, or an image it names appearing, runs it again", async () => {
    const src = await source('changed-mtl');
    const out = path.join(tmp, 'changed-mtl-out');
    fs.rmSync(path.join(src, 'obj', 'tri_n.png'));
    await bake(src, out);
    fs.appendFileSync(path.join(src, 'obj', 'tri.mtl'), '# edited\n');
    expect((await bake(src, out)).status).toEqual(only({}, ['obj/tri.obj']));
    // The missing image was recorded as absent: it appearing is a change too.
    fs.writeFileSync(path.join(src, 'obj', 'tri_n.png'), new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]));
    expect((await bake(src, out)).status).toEqual(only({}, ['obj/tri.obj']));
  });

  it('a changed option runs every file again', async () => {
    const src = await source('changed-option');
    const out = path.join(tmp, 'changed-option-out');
    await bake(src, out);
    expect((await bake(src, out, '--tangent-type', 'snorm16')).status).toEqual(only({}, ALL));
    expect((await bake(src, out, '--tangent-type', 'snorm16')).status).toEqual(only({}, []));
  });

  it('a config override or waiver that changes for one file runs that file alone', async () => {
    const src = await source('changed-override');
    const out = path.join(tmp, 'changed-override-out');
    const config = path.join(tmp, 'changed-override.config.json');
    const write = (o: object) => fs.writeFileSync(config, JSON.stringify({ schema: 'tanframe-config/1', ...o }));
    write({});
    await bake(src, out, '--config', config);
    expect((await bake(src, out, '--config', config)).status).toEqual(only({}, []));
    // Globs are relative to the config file's folder (tmp).
    write({ overrides: [{ files: ['changed-override/a.glb'], tolerance: 5 }] });
    expect((await bake(src, out, '--config', config)).status).toEqual(only({}, ['a.glb']));
    write({ overrides: [{ files: ['changed-override/a.glb'], tolerance: 5 }], waivers: [{ files: ['changed-override/sub/**'], gates: ['uv-overlap'], reason: 'atlas' }] });
    expect((await bake(src, out, '--config', config)).status).toEqual(only({}, ['sub/b.glb']));
  });

  it('another tool version runs every file again', async () => {
    const src = await source('changed-version');
    const out = path.join(tmp, 'changed-version-out');
    await bake(src, out);
    const file = path.join(out, STATE_FILE_NAME);
    const state = JSON.parse(fs.readFileSync(file, 'utf8'));
    for (const r of Object.values<any>(state.records)) r.tool = '0.0.1-older';
    fs.writeFileSync(file, JSON.stringify(state));
    expect((await bake(src, out)).status).toEqual(only({}, ALL));
  });

  it('an output edited or deleted by hand is made again', async () => {
    const src = await source('edited-output');
    const out = path.join(tmp, 'edited-output-out');
    await bake(src, out);
    const good = fs.readFileSync(path.join(out, 'sub', 'b.glb'));
    fs.appendFileSync(path.join(out, 'sub', 'b.glb'), 'x');
    fs.rmSync(path.join(out, 'quad', 'maps', 'normal.png'));
    const r = await bake(src, out);
    expect(r.status).toEqual(only({}, ['quad/quad.gltf', 'sub/b.glb']));
    expect(fs.readFileSync(path.join(out, 'sub', 'b.glb')).equals(good)).toBe(true);
    expect(fs.existsSync(path.join(out, 'quad', 'maps', 'normal.png'))).toBe(true);
  });

  it('--force runs every file whatever the state says, and records them', async () => {
    const src = await source('forced');
    const out = path.join(tmp, 'forced-out');
    await bake(src, out);
    expect((await bake(src, out, '--force')).status).toEqual(only({}, ALL));
    expect((await bake(src, out)).status).toEqual(only({}, []));
  });

  it('a file that tripped a gate is not recorded: it runs and trips again every time', async () => {
    const src = path.join(tmp, 'gated');
    const g = gridAsset(1);
    // Triangle 0 collapsed in UV: all three corners at one point.
    for (let k = 0; k < 3; k++) setCornerUv(g, 0, k, [0.5, 0.5]);
    await writeGridGlb(src, 'bad', g);
    await writeGridGlb(src, 'good', gridAsset(1));
    const out = path.join(tmp, 'gated-out');
    for (let run = 0; run < 2; run++) {
      const r = await bake(src, out, '--fail-on', 'degenerate-uv');
      expect(r.code).toBe(1);
      expect(r.status).toEqual(run === 0 ? { 'bad.glb': 'ok', 'good.glb': 'ok' } : { 'bad.glb': 'ok', 'good.glb': 'up-to-date' });
    }
  });

  it('a file that failed is not recorded, and a failed run writes no state', async () => {
    const src = path.join(tmp, 'failing');
    fs.mkdirSync(src, { recursive: true });
    fs.writeFileSync(path.join(src, 'broken.glb'), 'not a GLB at all');
    const out = path.join(tmp, 'failing-out');
    const r = await bake(src, out);
    expect(r.status).toEqual({ 'broken.glb': 'failed' });
    expect(fs.existsSync(path.join(out, STATE_FILE_NAME))).toBe(false);
  });
});

describe('a state that cannot be trusted', () => {
  it('a corrupt state file is ignored with a warning and written anew', async () => {
    const src = await source('corrupt');
    const out = path.join(tmp, 'corrupt-out');
    await bake(src, out);
    fs.writeFileSync(path.join(out, STATE_FILE_NAME), '{"schema": "tanframe-state/1", "records": {');
    const r = await bake(src, out);
    expect(r.stderr).toMatch(/^tanframe: warning: ignoring .*\.tanframe-state\.json: it is not valid JSON/);
    expect(r.status).toEqual(only({}, ALL));
    expect(JSON.parse(fs.readFileSync(path.join(out, STATE_FILE_NAME), 'utf8')).schema).toBe(STATE_SCHEMA);
    expect((await bake(src, out)).status).toEqual(only({}, []));
  });

  it('a foreign state file (another schema) is ignored with a warning', async () => {
    const src = await source('foreign');
    const out = path.join(tmp, 'foreign-out');
    await bake(src, out);
    const file = path.join(out, STATE_FILE_NAME);
    const state = JSON.parse(fs.readFileSync(file, 'utf8'));
    state.schema = 'someone-else/7';
    fs.writeFileSync(file, JSON.stringify(state));
    const r = await bake(src, out);
    expect(r.stderr).toMatch(/warning: ignoring .*: it is not a tanframe-state\/1 file/);
    expect(r.status).toEqual(only({}, ALL));
  });

  it('a record with a malformed hash makes the whole state untrusted', async () => {
    const src = await source('forged');
    const out = path.join(tmp, 'forged-out');
    await bake(src, out);
    const file = path.join(out, STATE_FILE_NAME);
    const state = JSON.parse(fs.readFileSync(file, 'utf8'));
    state.records['a.glb'].input.sha256 = 'anything';
    fs.writeFileSync(file, JSON.stringify(state));
    const r = await bake(src, out);
    expect(r.stderr).toMatch(/warning: ignoring .*: its record for 'a\.glb' is malformed/);
    expect(r.status).toEqual(only({}, ALL));
  });

  it('a record whose hashes do not describe the files on disk is not trusted', async () => {
    const src = await source('lying');
    const out = path.join(tmp, 'lying-out');
    await bake(src, out);
    const file = path.join(out, STATE_FILE_NAME);
    const state = JSON.parse(fs.readFileSync(file, 'utf8'));
    state.records['sub/b.glb'].outputs[0].sha256 = '0'.repeat(64);
    fs.writeFileSync(file, JSON.stringify(state));
    expect((await bake(src, out)).status).toEqual(only({}, ['sub/b.glb']));
  });
});

describe('the state file is never an input', () => {
  it('naming it as an input refuses the run (exit 2, the write plan names it) and nothing is written', async () => {
    const src = await source('as-input');
    const out = path.join(tmp, 'as-input-out');
    await bake(src, out);
    const before = mtimes(out);
    const r = await runCli(['bake', path.join(out, STATE_FILE_NAME), path.join(src, 'a.glb'), '-o', out, '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^tanframe: the state file .*\.tanframe-state\.json would overwrite .*, which the run reads/);
    expect(mtimes(out)).toEqual(before);
  });

  it('an input referencing the state file refuses the run before anything is written (exit 2)', async () => {
    const src = path.join(tmp, 'refers');
    await writeQuadGltf(src, 'quad');
    // The .gltf names an image inside the output folder, at the state file's path.
    const gltf = path.join(src, 'quad.gltf');
    const json = JSON.parse(fs.readFileSync(gltf, 'utf8'));
    json.images[0].uri = `baked/${STATE_FILE_NAME}`;
    fs.writeFileSync(gltf, JSON.stringify(json));
    fs.mkdirSync(path.join(src, 'baked'), { recursive: true });
    const precious = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 42]);
    fs.writeFileSync(path.join(src, 'baked', STATE_FILE_NAME), precious);
    const r = await runCli(['bake', src, '-o', path.join(src, 'baked'), '--jobs', '1', '--file-timeout', '0', '--quiet'], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^tanframe: the state file .*\.tanframe-state\.json would overwrite .*, which the run reads/);
    expect(new Uint8Array(fs.readFileSync(path.join(src, 'baked', STATE_FILE_NAME)))).toEqual(precious);
    expect(fs.readdirSync(path.join(src, 'baked'))).toEqual([STATE_FILE_NAME]);
  });
});
