/**
 * Paths through the command line: symbolic links leading out of an asset's folder are
 * refused, outputs stay inside -o (also through symlinked folders and odd names), outputs
 * never overwrite an input, folder walks survive symlink loops, and a file named twice is
 * processed once.
 */
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { buildGltf, glbBytes, writeGltf, unitQuad } from '../helpers/gltfBuilder.js';

const repo = path.resolve(__dirname, '../..');
let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-paths-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

// A normal-mapped quad (so it is baked), two triangles:
//   3 ---- 2
//   |    / |
//   0 ---- 1
function quad(): { json: any; bin: Uint8Array } {
  const prim = unitQuad();
  const a = buildGltf([prim]);
  a.json.materials[0].normalTexture = { index: 0 };
  a.json.textures = [{ source: 0 }];
  a.json.images = [{ uri: 'textures/normal.png' }];
  return a;
}

const PNG_BYTES = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3, 4]);

/** Writes `<dir>/<name>.gltf` + .bin + textures/normal.png; returns the .gltf path. */
async function writeQuad(dir: string, name: string): Promise<string> {
  const { json, bin } = quad();
  const file = await writeGltf(dir, name, json, bin);
  fs.mkdirSync(path.join(dir, 'textures'), { recursive: true });
  fs.writeFileSync(path.join(dir, 'textures', 'normal.png'), PNG_BYTES);
  return file;
}

function sha256(file: string): string {
  return createHash('sha256').update(fs.readFileSync(file)).digest('hex');
}

/** sha256 of every file under `dir` (symlinks not followed), by relative path. */
function tree(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string) => {
    for (const e of fs.readdirSync(d, { withFileTypes: true })) {
      const p = path.join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.isFile()) out[path.relative(dir, p)] = sha256(p);
      else if (e.isSymbolicLink()) out[path.relative(dir, p)] = `-> ${fs.readlinkSync(p)}`;
    }
  };
  if (fs.existsSync(dir)) walk(dir);
  return out;
}

describe('symbolic links out of the asset folder', () => {
  it('refuses a buffer reached through a symlink that leads outside', async () => {
    const outside = path.join(tmp, 'outside');
    const asset = path.join(tmp, 'linked-bin');
    const file = await writeQuad(asset, 'quad');
    fs.mkdirSync(outside, { recursive: true });
    fs.renameSync(path.join(asset, 'quad.bin'), path.join(outside, 'quad.bin'));
    fs.symlinkSync(path.join(outside, 'quad.bin'), path.join(asset, 'quad.bin'));
    const r = await runCli(['audit', path.relative(tmp, file), '--json'], tmp);
    expect(r.code).toBe(3);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/^tanframe: linked-bin\/quad\.gltf: .*symbolic link/);
    expect(JSON.parse(r.stdout).files[0].error.code).toBe('bad-uri');
  });

  it('refuses an image folder that is a symlink to elsewhere', async () => {
    const asset = path.join(tmp, 'linked-images');
    const file = await writeQuad(asset, 'quad');
    const elsewhere = path.join(tmp, 'elsewhere-textures');
    fs.renameSync(path.join(asset, 'textures'), elsewhere);
    fs.symlinkSync(elsewhere, path.join(asset, 'textures'));
    const out = path.join(tmp, 'linked-images-out');
    const r = await runCli(['bake', file, '-o', path.join(out, 'quad.gltf'), '--json'], tmp);
    expect(r.code).toBe(3);
    expect(JSON.parse(r.stdout).files[0].error.code).toBe('bad-uri');
    expect(tree(out)).toEqual({});
  });

  it('accepts a symlink that stays inside the folder', async () => {
    const asset = path.join(tmp, 'inner-link');
    const file = await writeQuad(asset, 'quad');
    fs.mkdirSync(path.join(asset, 'data'));
    fs.renameSync(path.join(asset, 'quad.bin'), path.join(asset, 'data', 'quad.bin'));
    fs.symlinkSync(path.join('data', 'quad.bin'), path.join(asset, 'quad.bin'));
    const r = await runCli(['audit', file, '--json'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
  });
});

describe('outputs stay inside -o', () => {
  it('refuses to write an image through a symlinked folder inside -o that leads outside', async () => {
    const asset = path.join(tmp, 'out-link-src');
    const file = await writeQuad(asset, 'quad');
    const out = path.join(tmp, 'out-link');
    const trap = path.join(tmp, 'out-link-trap');
    fs.mkdirSync(out, { recursive: true });
    fs.mkdirSync(trap, { recursive: true });
    fs.symlinkSync(trap, path.join(out, 'textures'));
    const r = await runCli(['bake', file, '-o', path.join(out, 'quad.gltf'), '--json'], tmp);
    // Refused by the write plan before any work: a link nobody named, on the way to a planned file.
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/the image out-link\/textures\/normal\.png .* through out-link\/textures, a symbolic link to out-link-trap/);
    expect(r.stdout).toBe('');
    expect(fs.readdirSync(trap)).toEqual([]);
    expect(fs.readdirSync(out)).toEqual(['textures']);
  });

  it('mirrors odd input names (leading dots, "..name") inside -o', async () => {
    const src = path.join(tmp, 'odd-names');
    const { json, bin } = quad();
    delete json.images;
    delete json.textures;
    delete json.materials[0].normalTexture;
    fs.mkdirSync(path.join(src, 'sub'), { recursive: true });
    for (const name of ['..x.glb', '.hidden.glb', path.join('sub', '..y.glb')]) fs.writeFileSync(path.join(src, name), glbBytes(json, bin));
    const out = path.join(tmp, 'odd-out');
    const r = await runCli(['bake', src, '-o', out, '--all-primitives', '--json', '--jobs', '1'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    // Besides the outputs, a bake into a folder keeps its state file there (DESIGN.md, Guarantees).
    expect(Object.keys(tree(out)).sort()).toEqual(['..x.glb', '.hidden.glb', '.tanframe-state.json', path.join('sub', '..y.glb')].sort());
    // Nothing landed beside -o.
    expect(fs.readdirSync(tmp).filter((n) => n.endsWith('.glb'))).toEqual([]);
  });

  it('mirrors a symlinked input subfolder under -o, not where the link points', async () => {
    const src = path.join(tmp, 'linked-tree');
    const real = path.join(tmp, 'linked-tree-real');
    await writeQuad(real, 'quad');
    fs.mkdirSync(src, { recursive: true });
    fs.symlinkSync(real, path.join(src, 'props'));
    const before = tree(real);
    const out = path.join(tmp, 'linked-tree-out');
    const r = await runCli(['bake', src, '-o', out, '--quiet'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(Object.keys(tree(out)).sort().map((f) => f.replace(/\.[0-9a-f]{16}\.bin$/, '.<hash>.bin'))).toEqual(['.tanframe-state.json', 'props/quad.<hash>.bin', 'props/quad.gltf', 'props/textures/normal.png']);
    expect(tree(real)).toEqual(before);
  });
});

describe('outputs never overwrite an input', () => {
  it('a .gltf output beside its input never replaces the input\'s buffer file: the new one has a name of its own', async () => {
    // scene.gltf reads its buffer from "copy.bin"; baking it to copy.gltf beside it once
    // wrote the new buffer to copy.bin, under the input. Now the buffer is named by content.
    const dir = path.join(tmp, 'bin-clash');
    const file = await writeQuad(dir, 'scene');
    fs.renameSync(path.join(dir, 'scene.bin'), path.join(dir, 'copy.bin'));
    const text = JSON.parse(fs.readFileSync(file, 'utf8'));
    text.buffers[0].uri = 'copy.bin';
    fs.writeFileSync(file, JSON.stringify(text));
    const before = tree(dir);
    const r = await runCli(['bake', file, '-o', path.join(dir, 'copy.gltf'), '--json'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const after = tree(dir);
    // Every input file is as it was; the output's buffer is a new file beside them.
    for (const [name, hash] of Object.entries(before)) expect(after[name], name).toBe(hash);
    const added = Object.keys(after).filter((n) => !(n in before)).sort();
    expect(added).toHaveLength(2);
    expect(added[0]).toMatch(/^copy\.[0-9a-f]{16}\.bin$/);
    expect(added[1]).toBe('copy.gltf');
    expect(JSON.parse(fs.readFileSync(path.join(dir, 'copy.gltf'), 'utf8')).buffers[0].uri).toBe(added[0]);
  });

  it('leaves an input image alone when the output copies it onto itself', async () => {
    const dir = path.join(tmp, 'same-folder');
    const file = await writeQuad(dir, 'scene');
    const png = path.join(dir, 'textures', 'normal.png');
    const inode = fs.statSync(png).ino;
    const r = await runCli(['bake', file, '-o', path.join(dir, 'scene_baked.gltf'), '--quiet'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    // Not rewritten: the same file (an atomic replace would give it a new inode).
    expect(fs.statSync(png).ino).toBe(inode);
    expect(fs.readFileSync(png)).toEqual(Buffer.from(PNG_BYTES));
    expect(fs.existsSync(path.join(dir, 'scene_baked.gltf'))).toBe(true);
  });

  it('refuses an output equal to the input unless --in-place (also through a symlink)', async () => {
    const dir = path.join(tmp, 'self-link');
    fs.mkdirSync(dir, { recursive: true });
    const { json, bin } = quad();
    fs.writeFileSync(path.join(dir, 'a.glb'), glbBytes(json, bin));
    const before = sha256(path.join(dir, 'a.glb'));
    const r = await runCli(['bake', path.join(dir, 'a.glb'), '-o', path.join(dir, 'a.glb')], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--in-place/);
    expect(sha256(path.join(dir, 'a.glb'))).toBe(before);
    // The same file reached through a symlinked folder: refused, the input untouched.
    fs.symlinkSync(dir, path.join(tmp, 'self-link-alias'));
    const viaLink = await runCli(['bake', path.join(dir, 'a.glb'), '-o', path.join(tmp, 'self-link-alias', 'a.glb'), '--json'], tmp);
    // Refused by the write plan before any work: one line, no report.
    expect(viaLink.code).toBe(2);
    expect(viaLink.stderr.trim().split('\n')).toHaveLength(1);
    expect(viaLink.stderr).toMatch(/a\.glb: .*--in-place/);
    expect(viaLink.stdout).toBe('');
    expect(sha256(path.join(dir, 'a.glb'))).toBe(before);
    expect(fs.readdirSync(dir)).toEqual(['a.glb']);
  });
});

describe('input discovery', () => {
  it('does not follow a symlink loop in a folder walk', async () => {
    const dir = path.join(tmp, 'loop');
    fs.mkdirSync(path.join(dir, 'sub'), { recursive: true });
    const { json, bin } = quad();
    fs.writeFileSync(path.join(dir, 'sub', 'a.glb'), glbBytes(json, bin));
    fs.symlinkSync('..', path.join(dir, 'sub', 'up'));
    fs.symlinkSync('.', path.join(dir, 'self'));
    const r = await runCli(['audit', 'loop', '--json'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout).files.map((f: any) => f.input)).toEqual(['loop/sub/a.glb']);
  });

  it('processes a file named twice (directly, with ./, through its folder and a symlink) once', async () => {
    const dir = path.join(tmp, 'twice');
    fs.mkdirSync(dir, { recursive: true });
    const { json, bin } = quad();
    fs.writeFileSync(path.join(dir, 'a.glb'), glbBytes(json, bin));
    fs.symlinkSync(path.join('twice', 'a.glb'), path.join(tmp, 'alias.glb'));
    const out = path.join(tmp, 'twice-out');
    const r = await runCli(['bake', 'twice/a.glb', './twice/a.glb', 'twice', 'alias.glb', '-o', out, '--json'], tmp);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(report.files).toHaveLength(1);
    expect(report.summary.files).toBe(1);
  });
});
