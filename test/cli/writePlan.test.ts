/**
 * Writes you can trust: the run's write plan refuses (exit 2, one line naming both paths,
 * nothing written) outputs over inputs or what they reference, two outputs on one path and
 * destinations that are symbolic links nobody named; colliding images get names of their own;
 * multi-file assets are replaced so a kill at any moment leaves one that reads whole;
 * --in-place keeps modes, links and embedded buffers and refuses OBJ; -o names decide the
 * container; equal bytes are not rewritten; write errors are one line and exit 3.
 */
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readAsset } from '../../src/lib/processFile.js';
import { runCli } from '../helpers/cli.js';
import { buildGltf, glbBytes, writeGltf, unitQuad } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

const repo = path.resolve(__dirname, '../..');
let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-plan-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

// A normal-mapped quad (so it is baked), two triangles:
//   3 ---- 2
//   |    / |
//   0 ---- 1
// With `mirrored`, u runs right to left (u = 1 - x): both triangles are mirrored, a finding
// that gets the primitive a UV picture.
function quad(withImage = true, mirrored = false): { json: any; bin: Uint8Array } {
  const uv = mirrored ? [1, 1, 0, 1, 0, 0, 1, 0] : [0, 1, 1, 1, 1, 0, 0, 0];
  const prim = unitQuad(uv);
  const a = buildGltf([prim]);
  if (withImage) {
    a.json.materials[0].normalTexture = { index: 0 };
    a.json.textures = [{ source: 0 }];
    a.json.images = [{ uri: 'textures/normal.png' }];
  } else {
    delete a.json.images;
    delete a.json.textures;
  }
  return a;
}

/** A 1x1 PNG of one colour (a valid image, so the validator reads it). */
function png(r: number): Uint8Array {
  return encodePngRgba8(1, 1, new Uint8Array([r, 128, 255, 255]));
}

/** Writes `<dir>/<name>.gltf` + `<name>.bin` + textures/normal.png (colour `shade`); returns the .gltf path. */
async function writeQuad(dir: string, name: string, shade = 128): Promise<string> {
  const { json, bin } = quad();
  const file = await writeGltf(dir, name, json, bin);
  fs.mkdirSync(path.join(dir, 'textures'), { recursive: true });
  fs.writeFileSync(path.join(dir, 'textures', 'normal.png'), png(shade));
  return file;
}

/** Writes the quad as a GLB without a normal texture (so runs pass --all-primitives). */
function writeQuadGlb(file: string, mirrored = false): string {
  const { json, bin } = quad(false, mirrored);
  fs.mkdirSync(path.dirname(file), { recursive: true });
  fs.writeFileSync(file, glbBytes(json, bin));
  return file;
}

// The same quad as OBJ (v grows upward in OBJ).
const QUAD_OBJ = 'v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvn 0 0 1\nf 1/1/1 2/2/1 3/3/1 4/4/1\n';

function sha256(file: string): string {
  return createHash('sha256').update(fs.readFileSync(file)).digest('hex');
}

/** sha256 of every file under `dir` (links shown as their target), by relative path. */
function tree(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isSymbolicLink()) out[path.relative(dir, p)] = `-> ${fs.readlinkSync(p)}`;
      else if (e.isDirectory()) walk(p);
      else if (e.isFile()) out[path.relative(dir, p)] = sha256(p);
    }
  };
  if (fs.existsSync(dir)) walk(dir);
  return out;
}

function oneLine(stderr: string): string {
  const lines = stderr.trim().split('\n');
  expect(lines, stderr).toHaveLength(1);
  return lines[0];
}

async function expectValid(file: string): Promise<void> {
  // Source: Khronos gltf-validator (0 errors).
  const v = await validateGltfFile(file);
  expect(v.errors, `${file}: ${v.messages.join('; ')}`).toBe(0);
}

describe('the write plan refuses the run before any work (exit 2, one line naming both paths, nothing written)', () => {
  it('cd assets; tanframe audit --report *.glb: the shell hands --report the first mesh', async () => {
    const dir = path.join(tmp, 'shell-glob');
    for (const n of ['a.glb', 'b.glb', 'c.glb']) writeQuadGlb(path.join(dir, n));
    const before = tree(dir);
    // What the shell makes of `--report *.glb`.
    const r = await runCli(['audit', '--report', 'a.glb', 'b.glb', 'c.glb'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/--report a\.glb .*mesh/);
    expect(r.stdout).toBe('');
    expect(tree(dir)).toEqual(before);
  });

  it('refuses --report naming an input of the run, and --junit naming a buffer an input references', async () => {
    const dir = path.join(tmp, 'report-on-input');
    const file = await writeQuad(dir, 'scene');
    const before = tree(dir);
    const r = await runCli(['audit', 'scene.gltf', '--report', 'scene.gltf'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/--report scene\.gltf would overwrite scene\.gltf, which the run reads/);
    // `..` and a symlinked folder lead to the same file: compared by real path.
    fs.symlinkSync(dir, path.join(tmp, 'report-on-input-alias'));
    const viaAlias = await runCli(['audit', file, '--junit', path.join(tmp, 'report-on-input-alias', 'x', '..', 'scene.bin')], tmp);
    expect(viaAlias.code).toBe(2);
    expect(oneLine(viaAlias.stderr)).toMatch(/--junit .*scene\.bin would overwrite .*scene\.bin, which the run reads/);
    const image = await runCli(['audit', file, '--html', path.join(dir, 'textures', 'normal.png')], tmp);
    expect(image.code).toBe(2);
    expect(oneLine(image.stderr)).toMatch(/normal\.png.*which the run reads/);
    expect(tree(dir)).toEqual(before);
  });

  it('refuses --html, --junit and --report naming each other or a mesh output', async () => {
    const dir = path.join(tmp, 'reports-clash');
    writeQuadGlb(path.join(dir, 'in', 'a.glb'));
    const same = await runCli(['audit', 'in', '--junit', 'r.xml', '--html', 'r.xml'], dir);
    expect(same.code).toBe(2);
    expect(oneLine(same.stderr)).toMatch(/--html r\.xml and --junit r\.xml are the same file/);
    const same2 = await runCli(['audit', 'in', '--report', 'out/r.json', '--junit', './out/../out/r.json'], dir);
    expect(same2.code).toBe(2);
    expect(oneLine(same2.stderr)).toMatch(/--junit .*r\.json and --report out\/r\.json are the same file/);
    const onMesh = await runCli(['bake', 'in', '-o', 'out', '--all-primitives', '--report', 'out/a.glb'], dir);
    expect(onMesh.code).toBe(2);
    expect(oneLine(onMesh.stderr)).toMatch(/--report out\/a\.glb and the output out\/a\.glb of in\/a\.glb are the same file/);
    expect(fs.existsSync(path.join(dir, 'out'))).toBe(false);
    expect(fs.existsSync(path.join(dir, 'r.xml'))).toBe(false);
  });

  it('refuses a batch where x.glb and x.obj of one folder would both be written as x.glb', async () => {
    const dir = path.join(tmp, 'same-stem');
    writeQuadGlb(path.join(dir, 'B', 'x.glb'));
    fs.writeFileSync(path.join(dir, 'B', 'x.obj'), QUAD_OBJ);
    const before = tree(dir);
    const r = await runCli(['bake', 'B', '-o', 'out', '--all-primitives'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/the output out\/x\.glb of B\/x\.obj and the output out\/x\.glb of B\/x\.glb are the same file/);
    expect(tree(dir)).toEqual(before);
  });

  it('refuses bake B -o B: one input\'s output over another input (and each over itself)', async () => {
    const dir = path.join(tmp, 'onto-inputs');
    writeQuadGlb(path.join(dir, 'B', 'x.glb'));
    fs.writeFileSync(path.join(dir, 'B', 'x.obj'), QUAD_OBJ);
    const before = tree(dir);
    const r = await runCli(['bake', 'B', '-o', 'B', '--all-primitives'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/B\/x\.glb/);
    expect(tree(dir)).toEqual(before);
    // x.glb written as glTF lands on x.gltf, another input of the run: refused, naming both.
    const { json, bin } = quad(false);
    await writeGltf(path.join(dir, 'B'), 'x', json, bin);
    const before2 = tree(dir);
    const cross = await runCli(['bake', 'B/x.glb', 'B/x.gltf', '-o', 'B', '--format', 'gltf', '--all-primitives'], dir);
    expect(cross.code).toBe(2);
    expect(oneLine(cross.stderr)).toMatch(/the output B\/x\.gltf of B\/x\.glb would overwrite B\/x\.gltf, which the run reads/);
    expect(tree(dir)).toEqual(before2);
  });

  it('refuses a mesh destination under -o that is a symbolic link nobody named, and writes through one that is named', async () => {
    const dir = path.join(tmp, 'planted-mesh-link');
    writeQuadGlb(path.join(dir, 'in', 'a.glb'));
    writeQuadGlb(path.join(dir, 'in', 'b.glb'));
    fs.mkdirSync(path.join(dir, 'out'));
    fs.writeFileSync(path.join(dir, 'victim.txt'), 'keep me');
    fs.symlinkSync(path.join(dir, 'victim.txt'), path.join(dir, 'out', 'a.glb'));
    const r = await runCli(['bake', 'in', '-o', 'out', '--all-primitives'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/out\/a\.glb .*is a symbolic link to victim\.txt/);
    expect(fs.readFileSync(path.join(dir, 'victim.txt'), 'utf8')).toBe('keep me');
    expect(fs.readdirSync(path.join(dir, 'out'))).toEqual(['a.glb']);
    // Named by the user (one input, -o the link itself): the target is written, the link kept.
    fs.writeFileSync(path.join(dir, 'target.glb'), 'old');
    fs.symlinkSync(path.join(dir, 'target.glb'), path.join(dir, 'named.glb'));
    const named = await runCli(['bake', 'in/b.glb', '-o', 'named.glb', '--all-primitives'], dir);
    expect(named.stderr).toBe('');
    expect(named.code).toBe(0);
    expect(fs.lstatSync(path.join(dir, 'named.glb')).isSymbolicLink()).toBe(true);
    expect((await readAsset(path.join(dir, 'target.glb'))).primitives[0].attributes.TANGENT).toBeDefined();
    // A named --report link: the same.
    fs.writeFileSync(path.join(dir, 'report-target.json'), '{}');
    fs.symlinkSync('report-target.json', path.join(dir, 'report.json'));
    const report = await runCli(['audit', 'in/b.glb', '--report', 'report.json', '--quiet'], dir);
    expect(report.code).toBe(0);
    expect(fs.lstatSync(path.join(dir, 'report.json')).isSymbolicLink()).toBe(true);
    expect(JSON.parse(fs.readFileSync(path.join(dir, 'report-target.json'), 'utf8')).schema).toBe('tanframe-report/1');
  });

  it('refuses a symbolic link planted in --uv-maps (its target untouched)', async () => {
    const dir = path.join(tmp, 'planted-picture');
    writeQuadGlb(path.join(dir, 'in', 'a.glb'), true);
    fs.mkdirSync(path.join(dir, 'maps'));
    fs.writeFileSync(path.join(dir, 'victim.svg'), 'keep me');
    fs.symlinkSync(path.join(dir, 'victim.svg'), path.join(dir, 'maps', 'in_a.glb__m0p0.svg'));
    const r = await runCli(['audit', 'in', '--all-primitives', '--uv-maps', 'maps', '--report', 'r.json'], dir);
    expect(r.code).toBe(2);
    expect(oneLine(r.stderr)).toMatch(/--uv-maps maps: maps\/in_a\.glb__m0p0\.svg is a symbolic link to victim\.svg/);
    expect(fs.readFileSync(path.join(dir, 'victim.svg'), 'utf8')).toBe('keep me');
    expect(fs.existsSync(path.join(dir, 'r.json'))).toBe(false);
  });
});

describe('files named only after reading pass the same guard right before they are written', () => {
  it('a symbolic link planted where the content-named buffer goes fails that file (exit 3), its target untouched', async () => {
    const dir = path.join(tmp, 'planted-bin');
    await writeQuad(path.join(dir, 'in'), 'crate');
    expect((await runCli(['bake', 'in/crate.gltf', '-o', 'probe/crate.gltf', '--quiet'], dir)).code).toBe(0);
    const binName = fs.readdirSync(path.join(dir, 'probe')).find((n) => n.endsWith('.bin'))!;
    fs.mkdirSync(path.join(dir, 'out'));
    // The link leads to a file of the user's inside the output folder (a link leading outside
    // is refused as landing outside the output folder).
    fs.writeFileSync(path.join(dir, 'out', 'victim.bin'), 'keep me');
    fs.symlinkSync('victim.bin', path.join(dir, 'out', binName));
    const r = await runCli(['bake', 'in/crate.gltf', '-o', 'out/crate.gltf', '--json'], dir);
    expect(r.code).toBe(3);
    expect(oneLine(r.stderr)).toMatch(new RegExp(`crate\\.gltf: .*${binName.replace(/\./g, '\\.')}' is a symbolic link`));
    expect(JSON.parse(r.stdout).files[0].error.code).toBe('usage');
    expect(fs.readFileSync(path.join(dir, 'out', 'victim.bin'), 'utf8')).toBe('keep me');
    expect(fs.readdirSync(path.join(dir, 'out')).sort()).toEqual([binName, 'victim.bin'].sort());
  });
});

describe('images that would share one name in one output folder', () => {
  it('different contents get distinct names, each asset\'s JSON pointing at its own; equal contents share one file', async () => {
    const dir = path.join(tmp, 'image-clash');
    await writeQuad(path.join(dir, 'p1'), 'a', 10);
    await writeQuad(path.join(dir, 'p2'), 'b', 200);
    await writeQuad(path.join(dir, 'p3'), 'c', 10); // same bytes as p1's
    // Two folder inputs: each mirrored from its own base, so all land in out/ with textures/normal.png.
    const r = await runCli(['bake', 'p1', 'p2', 'p3', '-o', 'out', '--quiet'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const textures = fs.readdirSync(path.join(dir, 'out', 'textures')).sort();
    expect(textures).toHaveLength(2);
    for (const t of textures) expect(t).toMatch(/^normal\.[0-9a-f]{16}\.png$/);
    const uri = (n: string) => JSON.parse(fs.readFileSync(path.join(dir, 'out', `${n}.gltf`), 'utf8')).images[0].uri;
    expect(uri('a')).toBe(uri('c'));
    expect(uri('a')).not.toBe(uri('b'));
    expect(fs.readFileSync(path.join(dir, 'out', uri('a')))).toEqual(Buffer.from(png(10)));
    expect(fs.readFileSync(path.join(dir, 'out', uri('b')))).toEqual(Buffer.from(png(200)));
    for (const n of ['a', 'b', 'c']) await expectValid(path.join(dir, 'out', `${n}.gltf`));
    // A second run gives the same names (deterministic).
    const again = await runCli(['bake', 'p1', 'p2', 'p3', '-o', 'out2', '--quiet'], dir);
    expect(again.code).toBe(0);
    expect(fs.readdirSync(path.join(dir, 'out2', 'textures')).sort()).toEqual(textures);
  });

  it('identical images from two folders share the plain name', async () => {
    const dir = path.join(tmp, 'image-share');
    await writeQuad(path.join(dir, 'p1'), 'a', 40);
    await writeQuad(path.join(dir, 'p2'), 'b', 40);
    const r = await runCli(['bake', 'p1', 'p2', '-o', 'out', '--quiet'], dir);
    expect(r.code).toBe(0);
    expect(fs.readdirSync(path.join(dir, 'out', 'textures'))).toEqual(['normal.png']);
  });
});

describe('explicit files from different folders keep their layout', () => {
  it('bake a/x.glb b/x.glb -o out writes out/a/x.glb and out/b/x.glb', async () => {
    const dir = path.join(tmp, 'explicit-layout');
    writeQuadGlb(path.join(dir, 'a', 'x.glb'));
    writeQuadGlb(path.join(dir, 'b', 'deep', 'x.glb'));
    const r = await runCli(['bake', 'a/x.glb', 'b/deep/x.glb', '-o', 'out', '--all-primitives', '--quiet'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    // Beside the outputs, the run's state file (a bake into a folder keeps one).
    expect(Object.keys(tree(path.join(dir, 'out'))).sort()).toEqual(['.tanframe-state.json', path.join('a', 'x.glb'), path.join('b', 'deep', 'x.glb')]);
  });
});

describe('output names', () => {
  it('the extension of -o decides the container', async () => {
    const dir = path.join(tmp, 'names-ext');
    const input = writeQuadGlb(path.join(dir, 'in.glb'));
    expect((await runCli(['bake', input, '-o', 'o.gltf', '--all-primitives'], dir)).code).toBe(0);
    expect(fs.readFileSync(path.join(dir, 'o.gltf'), 'utf8').trimStart().startsWith('{')).toBe(true);
    await expectValid(path.join(dir, 'o.gltf'));
    expect((await runCli(['bake', path.join(dir, 'o.gltf'), '-o', 'back.glb', '--all-primitives'], dir)).code).toBe(0);
    expect(fs.readFileSync(path.join(dir, 'back.glb')).subarray(0, 4).toString()).toBe('glTF');
  });

  it('-o x.obj and an extension that contradicts --format are usage errors (exit 2, nothing written)', async () => {
    const dir = path.join(tmp, 'names-bad');
    const input = writeQuadGlb(path.join(dir, 'in.glb'));
    const obj = await runCli(['bake', input, '-o', 'x.obj'], dir);
    expect(obj.code).toBe(2);
    expect(oneLine(obj.stderr)).toMatch(/x\.obj: OBJ cannot hold tangents/);
    const contra = await runCli(['bake', input, '--format', 'gltf', '-o', 'x.glb'], dir);
    expect(contra.code).toBe(2);
    expect(oneLine(contra.stderr)).toMatch(/-o x\.glb says glb but --format says gltf/);
    const many = await runCli(['bake', input, path.join(dir, 'in.glb'), dir, '-o', 'x.glb'], dir);
    expect(many.code).toBe(2);
    expect(fs.readdirSync(dir)).toEqual(['in.glb']);
  });

  it('with one input, -o naming an existing folder, ending in / or without an extension writes into that folder', async () => {
    const dir = path.join(tmp, 'names-folder');
    const input = writeQuadGlb(path.join(dir, 'in', 'crate.glb'));
    fs.mkdirSync(path.join(dir, 'existing'));
    for (const o of ['existing', 'slashed/', 'newdir']) {
      const r = await runCli(['bake', input, '-o', o, '--all-primitives'], dir);
      expect(r.code, o).toBe(0);
      expect(fs.readdirSync(path.join(dir, o)).filter((n) => n !== '.tanframe-state.json'), o).toEqual(['crate.glb']);
    }
    expect(fs.existsSync(path.join(dir, 'newdir.glb'))).toBe(false);
  });
});

describe('--in-place', () => {
  it('keeps the permission bits (640 stays 640)', async () => {
    const dir = path.join(tmp, 'inplace-mode');
    const glb = writeQuadGlb(path.join(dir, 'a.glb'));
    fs.chmodSync(glb, 0o640);
    const gltf = await writeQuad(dir, 'b');
    fs.chmodSync(gltf, 0o640);
    const r = await runCli(['bake', glb, gltf, '--in-place', '--all-primitives'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(fs.statSync(glb).mode & 0o777).toBe(0o640);
    expect(fs.statSync(gltf).mode & 0o777).toBe(0o640);
    const bin = JSON.parse(fs.readFileSync(gltf, 'utf8')).buffers[0].uri;
    expect(fs.statSync(path.join(dir, bin)).mode & 0o777).toBe(0o640);
    // The old buffer, read by this asset only, is gone; the new one is named by its content.
    expect(fs.readdirSync(dir).filter((n) => n.endsWith('.bin'))).toEqual([bin]);
    await expectValid(gltf);
  });

  it('on a symbolic link writes the target and keeps the link', async () => {
    const dir = path.join(tmp, 'inplace-link');
    const target = writeQuadGlb(path.join(dir, 'real', 'a.glb'));
    fs.symlinkSync(target, path.join(dir, 'link.glb'));
    const r = await runCli(['bake', 'link.glb', '--in-place', '--all-primitives'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(fs.lstatSync(path.join(dir, 'link.glb')).isSymbolicLink()).toBe(true);
    expect(fs.readlinkSync(path.join(dir, 'link.glb'))).toBe(target);
    expect((await readAsset(target)).primitives[0].attributes.TANGENT).toBeDefined();
    await expectValid(target);
  });

  it('a .gltf link: beside its target, the target is baked and the link kept; from another folder, refused for that file', async () => {
    const dir = path.join(tmp, 'inplace-gltf-link');
    const target = await writeQuad(dir, 'real');
    fs.symlinkSync('real.gltf', path.join(dir, 'alias.gltf'));
    const r = await runCli(['bake', 'alias.gltf', '--in-place'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(fs.readlinkSync(path.join(dir, 'alias.gltf'))).toBe('real.gltf');
    expect((await readAsset(target)).primitives[0].attributes.TANGENT).toBeDefined();
    await expectValid(target);
    // A link in another folder: its URIs resolve from the link's folder, the target's from its own.
    const other = path.join(tmp, 'inplace-gltf-link-other');
    fs.mkdirSync(other);
    fs.symlinkSync(target, path.join(other, 'far.gltf'));
    const before = tree(dir);
    const far = await runCli(['bake', 'far.gltf', '--in-place'], other);
    expect(far.code).toBe(3);
    expect(oneLine(far.stderr)).toMatch(/far\.gltf: --in-place: the \.gltf is a symbolic link into another folder/);
    expect(tree(dir)).toEqual(before);
  });

  it('keeps embedded data: buffers embedded and a .glb a .glb', async () => {
    const dir = path.join(tmp, 'inplace-embedded');
    const { json, bin } = quad(false);
    const gltf = await writeGltf(dir, 'e', json, bin, true);
    const glb = writeQuadGlb(path.join(dir, 'g.glb'));
    const r = await runCli(['bake', gltf, glb, '--in-place', '--all-primitives'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(fs.readdirSync(dir).sort()).toEqual(['e.gltf', 'g.glb']);
    const out = JSON.parse(fs.readFileSync(gltf, 'utf8'));
    expect(out.buffers).toHaveLength(1);
    expect(out.buffers[0].uri).toMatch(/^data:application\/octet-stream;base64,/);
    expect((await readAsset(gltf)).primitives[0].attributes.TANGENT).toBeDefined();
    expect(fs.readFileSync(glb).subarray(0, 4).toString()).toBe('glTF');
    await expectValid(gltf);
    await expectValid(glb);
  });

  it('refuses an OBJ input before any work, says to use -o (GLB), and bakes the rest of the batch', async () => {
    const dir = path.join(tmp, 'inplace-obj');
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'plank.obj'), QUAD_OBJ);
    const glb = writeQuadGlb(path.join(dir, 'a.glb'));
    const before = sha256(glb);
    const r = await runCli(['bake', dir, '--in-place', '--all-primitives', '--json'], tmp);
    expect(r.code).toBe(3);
    expect(oneLine(r.stderr)).toMatch(/plank\.obj: .*OBJ.*-o.*\.glb/);
    const report = JSON.parse(r.stdout);
    expect(report.files.map((f: any) => [path.basename(f.input), f.status])).toEqual([['a.glb', 'ok'], ['plank.obj', 'failed']]);
    expect(fs.readFileSync(path.join(dir, 'plank.obj'), 'utf8')).toBe(QUAD_OBJ);
    expect(sha256(glb)).not.toBe(before);
  });

  it('never rewrites a .bin another .gltf shares: the baked asset gets its own buffer file', async () => {
    const dir = path.join(tmp, 'inplace-shared');
    const a = await writeQuad(dir, 'a');
    const b = JSON.parse(fs.readFileSync(a, 'utf8'));
    fs.writeFileSync(path.join(dir, 'b.gltf'), JSON.stringify(b)); // b.gltf reads a.bin too
    const shared = sha256(path.join(dir, 'a.bin'));
    const r = await runCli(['bake', 'a.gltf', '--in-place', '--json'], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).files[0].notes.join(' ')).toMatch(/kept a\.bin as it was: another \.gltf beside it reads it/);
    expect(sha256(path.join(dir, 'a.bin'))).toBe(shared);
    const newBin = JSON.parse(fs.readFileSync(a, 'utf8')).buffers[0].uri;
    expect(newBin).toMatch(/^a\.[0-9a-f]{16}\.bin$/);
    await expectValid(a);
    await expectValid(path.join(dir, 'b.gltf'));
    expect((await readAsset(path.join(dir, 'b.gltf'))).primitives[0].attributes.TANGENT).toBeUndefined();
  });
});

describe('equal bytes are not rewritten', () => {
  it('a rerun leaves every output whose bytes did not change untouched (mtime kept)', async () => {
    const dir = path.join(tmp, 'equal-bytes');
    await writeQuad(path.join(dir, 'in'), 'a');
    writeQuadGlb(path.join(dir, 'in', 'g.glb'));
    expect((await runCli(['bake', 'in', '-o', 'out', '--all-primitives', '--quiet'], dir)).code).toBe(0);
    const files = Object.keys(tree(path.join(dir, 'out')));
    expect(files.length).toBe(5); // a.gltf, a.<hash>.bin, textures/normal.png, g.glb, .tanframe-state.json
    const past = new Date('2020-01-01T00:00:00Z');
    for (const f of files) fs.utimesSync(path.join(dir, 'out', f), past, past);
    // --force: every file is baked and written again (not skipped as up-to-date), to equal bytes.
    expect((await runCli(['bake', 'in', '-o', 'out', '--all-primitives', '--quiet', '--force'], dir)).code).toBe(0);
    for (const f of files) expect(fs.statSync(path.join(dir, 'out', f)).mtime.getTime(), f).toBe(past.getTime());
  });
});

describe('exit status 3 and one line for file-system errors while writing', () => {
  it('--uv-maps that cannot be created: one line, exit 3, no stack trace, the other reports still written', async () => {
    const dir = path.join(tmp, 'uvmaps-blocked');
    // The quad with every UV on one point: two degenerate-UV triangles, a finding, so a picture
    // is due (mirrored triangles alone are a note and draw none).
    const collapsed = quad(false);
    const uvView = collapsed.json.bufferViews[collapsed.json.accessors[collapsed.json.meshes[0].primitives[0].attributes.TEXCOORD_0].bufferView];
    new Float32Array(collapsed.bin.buffer, collapsed.bin.byteOffset + (uvView.byteOffset ?? 0), 8).fill(0.5);
    fs.mkdirSync(path.join(dir, 'in'), { recursive: true });
    fs.writeFileSync(path.join(dir, 'in', 'a.glb'), glbBytes(collapsed.json, collapsed.bin));
    fs.writeFileSync(path.join(dir, 'blocker'), 'a file, not a folder');
    const r = await runCli(['audit', 'in', '--all-primitives', '--uv-maps', 'blocker/maps', '--report', 'r.json', '--junit', 'j.xml', '--html', 'h.html'], dir);
    const report = JSON.parse(fs.readFileSync(path.join(dir, 'r.json'), 'utf8'));
    expect(report.files[0].primitives[0].degenerateUv.count).toBe(2);
    expect(r.code).toBe(3);
    expect(oneLine(r.stderr)).toMatch(/^tanframe: --uv-maps blocker\/maps: cannot write .*a parent of the path is not a folder/);
    expect(fs.existsSync(path.join(dir, 'j.xml'))).toBe(true);
    expect(fs.existsSync(path.join(dir, 'h.html'))).toBe(true);
  });

  it('a --report that cannot be written: one line, exit 3, --junit and --html still written', async () => {
    const dir = path.join(tmp, 'report-blocked');
    writeQuadGlb(path.join(dir, 'in', 'a.glb'));
    fs.writeFileSync(path.join(dir, 'blocker'), 'a file, not a folder');
    const r = await runCli(['audit', 'in', '--report', 'blocker/r.json', '--junit', 'j.xml', '--html', 'h.html', '--quiet'], dir);
    expect(r.code).toBe(3);
    expect(oneLine(r.stderr)).toMatch(/^tanframe: --report blocker\/r\.json: cannot write/);
    expect(r.stderr).not.toMatch(/\n\s+at /);
    expect(fs.existsSync(path.join(dir, 'j.xml'))).toBe(true);
    expect(fs.existsSync(path.join(dir, 'h.html'))).toBe(true);
    const junit = await runCli(['audit', 'in', '--junit', 'blocker/j.xml', '--report', 'r.json', '--quiet'], dir);
    expect(junit.code).toBe(3);
    expect(oneLine(junit.stderr)).toMatch(/^tanframe: --junit blocker\/j\.xml: cannot write/);
    expect(fs.existsSync(path.join(dir, 'r.json'))).toBe(true);
  });
});

// ---- kill tests: a process stopped between the renames of a multi-file asset ----

const PAUSING_CLI = path.join(repo, 'test', 'helpers', 'pausingCli.mjs');

/**
 * Runs `tanframe <args>` in a child process that stops at `pause` (the write hook of
 * pausingCli.mjs), waits until it got there, kills it with SIGKILL and returns.
 */
async function killAt(pause: 'before-main' | 'after-main', args: string[], cwd: string): Promise<void> {
  const marker = path.join(tmp, `marker-${process.hrtime.bigint()}`);
  const child = spawn(process.execPath, [PAUSING_CLI, ...args, '--jobs', '1', '--file-timeout', '0', '--quiet'], {
    cwd, stdio: ['ignore', 'ignore', 'pipe'], env: { ...process.env, TANFRAME_TEST_PAUSE: pause, TANFRAME_TEST_MARKER: marker },
  });
  let stderr = '';
  child.stderr!.on('data', (d) => { stderr += d; });
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  let done = false;
  void exited.then(() => { done = true; });
  const deadline = Date.now() + 60_000;
  while (!fs.existsSync(marker) && !done && Date.now() < deadline) await new Promise((r) => setTimeout(r, 20));
  expect(fs.existsSync(marker), `the run never reached ${pause}: ${stderr}`).toBe(true);
  child.kill('SIGKILL');
  await exited;
}

/** The asset reads whole: the reader takes it and the Khronos validator finds no error. */
async function readsWhole(file: string): Promise<void> {
  const asset = await readAsset(file);
  expect(asset.primitives.length).toBeGreaterThan(0);
  await expectValid(file);
}

describe('a multi-file asset killed between its renames reads entirely old or entirely new', () => {
  it('bake -o: killed before the JSON rename -> the old asset; after it -> the new one; the next run cleans up', async () => {
    const dir = path.join(tmp, 'kill-out');
    await writeQuad(path.join(dir, 'in'), 'crate');
    // The old output: the same asset baked with integer tangents (other bytes, other buffer).
    const base = ['bake', 'in/crate.gltf', '-o', 'out/crate.gltf'];
    expect((await runCli([...base, '--tangent-type', 'snorm16', '--quiet'], dir)).code).toBe(0);
    const old = tree(path.join(dir, 'out'));
    // The complete new output, made elsewhere for comparison.
    expect((await runCli(['bake', 'in/crate.gltf', '-o', 'ref/crate.gltf', '--quiet'], dir)).code).toBe(0);
    const fresh = tree(path.join(dir, 'ref'));
    const freshBin = Object.keys(fresh).find((n) => n.endsWith('.bin'))!;
    const oldBin = Object.keys(old).find((n) => n.endsWith('.bin'))!;
    expect(freshBin).not.toBe(oldBin);

    await killAt('before-main', base, dir);
    const afterFirst = tree(path.join(dir, 'out'));
    // The old JSON and every file it names, byte for byte; the new buffer is beside them, unnamed by any JSON.
    for (const [n, h] of Object.entries(old)) expect(afterFirst[n], n).toBe(h);
    expect(afterFirst[freshBin]).toBe(fresh[freshBin]);
    await readsWhole(path.join(dir, 'out', 'crate.gltf'));
    expect(JSON.parse(fs.readFileSync(path.join(dir, 'out', 'crate.gltf'), 'utf8')).buffers[0].uri).toBe(oldBin);

    await killAt('after-main', base, dir);
    const afterSecond = tree(path.join(dir, 'out'));
    for (const [n, h] of Object.entries(fresh)) expect(afterSecond[n], n).toBe(h);
    expect(afterSecond[oldBin]).toBe(old[oldBin]); // not yet removed
    await readsWhole(path.join(dir, 'out', 'crate.gltf'));

    // The next run leaves exactly the new asset: the old buffer and the temporary files gone.
    const again = await runCli([...base, '--quiet'], dir);
    expect(again.stderr).toBe('');
    expect(again.code).toBe(0);
    expect(tree(path.join(dir, 'out'))).toEqual(fresh);
  });

  it('bake -o with a changed image: the new asset names its own copy; killed before the JSON rename the old asset reads its old image', async () => {
    // in/crate.gltf + crate.bin + textures/normal.png (shade 128), baked to out/; then the
    // source image changes (shade 90) and the bake runs again.
    const dir = path.join(tmp, 'kill-image');
    await writeQuad(path.join(dir, 'in'), 'crate');
    const base = ['bake', 'in/crate.gltf', '-o', 'out/crate.gltf'];
    expect((await runCli([...base, '--quiet'], dir)).code).toBe(0);
    const old = tree(path.join(dir, 'out'));
    expect(old['textures/normal.png']).toBe(sha256(path.join(dir, 'in', 'textures', 'normal.png')));
    fs.writeFileSync(path.join(dir, 'in', 'textures', 'normal.png'), png(90));
    const newImage = sha256(path.join(dir, 'in', 'textures', 'normal.png'));

    await killAt('before-main', base, dir);
    const afterKill = tree(path.join(dir, 'out'));
    for (const [n, h] of Object.entries(old)) expect(afterKill[n], n).toBe(h); // the old JSON, buffer and image as they were
    await readsWhole(path.join(dir, 'out', 'crate.gltf'));

    const r = await runCli([...base, '--quiet'], dir);
    expect(r.code, r.stderr).toBe(0);
    const json = JSON.parse(fs.readFileSync(path.join(dir, 'out', 'crate.gltf'), 'utf8'));
    const uri: string = json.images[0].uri;
    expect(uri).toMatch(/^textures\/normal\.[0-9a-f]{16}\.png$/);
    const now = tree(path.join(dir, 'out'));
    expect(now[uri]).toBe(newImage);
    expect(now['textures/normal.png']).toBeUndefined(); // the old image went with the old JSON
    await readsWhole(path.join(dir, 'out', 'crate.gltf'));

    // A rerun that ignores the state names the same copy again and writes nothing.
    const before = fs.statSync(path.join(dir, 'out', 'crate.gltf')).mtimeMs;
    expect((await runCli([...base, '--force', '--quiet'], dir)).code).toBe(0);
    expect(tree(path.join(dir, 'out'))).toEqual(now);
    expect(fs.statSync(path.join(dir, 'out', 'crate.gltf')).mtimeMs).toBe(before);
  });

  it('--in-place: killed before the JSON rename leaves the input exactly as it was', async () => {
    const dir = path.join(tmp, 'kill-inplace');
    await writeQuad(dir, 'crate');
    const before = tree(dir);
    await killAt('before-main', ['bake', 'crate.gltf', '--in-place'], dir);
    const after = tree(dir);
    for (const [n, h] of Object.entries(before)) expect(after[n], n).toBe(h);
    await readsWhole(path.join(dir, 'crate.gltf'));
    expect((await readAsset(path.join(dir, 'crate.gltf'))).primitives[0].attributes.TANGENT).toBeUndefined();

    await killAt('after-main', ['bake', 'crate.gltf', '--in-place'], dir);
    await readsWhole(path.join(dir, 'crate.gltf'));
    expect((await readAsset(path.join(dir, 'crate.gltf'))).primitives[0].attributes.TANGENT).toBeDefined();

    // The next run bakes the baked asset again and leaves one buffer, the one its JSON names.
    const again = await runCli(['bake', 'crate.gltf', '--in-place', '--quiet'], dir);
    expect(again.code).toBe(0);
    const bins = fs.readdirSync(dir).filter((n) => n.endsWith('.bin') && n !== 'crate.bin');
    expect(bins).toEqual([JSON.parse(fs.readFileSync(path.join(dir, 'crate.gltf'), 'utf8')).buffers[0].uri]);
    expect(fs.readdirSync(dir).filter((n) => n.endsWith('.tmp'))).toEqual([]);
  });
});
