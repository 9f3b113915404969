/**
 * No needless writes: a file none of whose primitives changes (nothing has a normal texture,
 * or --keep-existing kept every stored tangent) comes out as the input's bytes, with the
 * buffers and images it references copied byte for byte; --in-place leaves it untouched.
 */
import { existsSync } from 'node:fs';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { buildGltf, glbBytes, writeGltf, unitQuad } from '../helpers/gltfBuilder.js';
import { gridAsset, writeGridGlb } from '../helpers/gridAsset.js';
import { validateGltfFile } from '../helpers/validate.js';
import { readAsset } from '../../src/lib/processFile.js';

const repo = path.resolve(__dirname, '../..');
const samples = path.resolve(repo, '../shared/datasets/gltf-samples');
const samplesPresent = existsSync(samples);
if (!samplesPresent) console.warn(`SKIPPED: Draco copy check: glTF sample assets not found at ${samples}`);

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-unchanged-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

// A quad without a normal texture (so nothing takes part in the bake), two triangles:
//   3 ---- 2
//   |    / |
//   0 ---- 1
function plainQuad(): { json: any; bin: Uint8Array } {
  const prim = unitQuad();
  const a = buildGltf([prim]);
  // A base colour image by URI: it must be copied beside the output, not embedded.
  a.json.materials[0].pbrMetallicRoughness = { baseColorTexture: { index: 0 } };
  a.json.textures = [{ source: 0 }];
  a.json.images = [{ uri: 'tex/colour.png' }];
  return a;
}

const PNG_BYTES = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 9, 8, 7, 6]);

function bytesOf(p: string): Buffer {
  return fs.readFileSync(p);
}

describe('a file with nothing to bake', () => {
  it('comes out of -o as the input GLB byte for byte, and still validates', async () => {
    const dir = path.join(tmp, 'glb');
    fs.mkdirSync(dir, { recursive: true });
    const { json, bin } = plainQuad();
    // The image embedded as a data: URI (a 1 x 1 PNG, common encoding, from memory): a re-encode
    // would move it into the buffer.
    json.images = [{ uri: 'data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==' }];
    const input = path.join(dir, 'quad.glb');
    fs.writeFileSync(input, glbBytes(json, bin));
    const out = path.join(tmp, 'glb-out', 'quad.glb');
    const r = await runCli(['bake', input, '-o', out, '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(bytesOf(out).equals(bytesOf(input))).toBe(true);
    expect(fs.readdirSync(path.join(tmp, 'glb-out'))).toEqual(['quad.glb']);
    const report = JSON.parse(r.stdout);
    expect(report.files[0].notes).toContain("nothing to bake: written as the input's bytes");
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors, v.messages.join('; ')).toBe(0);
  });

  it('is encoded when it is a GLB naming an image by URI: the run writes nothing beside a GLB', async () => {
    const dir = path.join(tmp, 'glb-uri');
    fs.mkdirSync(path.join(dir, 'tex'), { recursive: true });
    const { json, bin } = plainQuad();
    const input = path.join(dir, 'quad.glb');
    fs.writeFileSync(input, glbBytes(json, bin));
    fs.writeFileSync(path.join(dir, 'tex', 'colour.png'), PNG_BYTES);
    const out = path.join(tmp, 'glb-uri-out', 'quad.glb');
    const r = await runCli(['bake', input, '-o', out, '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(fs.readdirSync(path.join(tmp, 'glb-uri-out'))).toEqual(['quad.glb']);
    const written = await readAsset(out);
    expect(written.json.images[0].uri).toBeUndefined();
    expect(typeof written.json.images[0].bufferView).toBe('number');
  });

  it('comes out of -o as a .gltf with its .bin and images copied byte for byte', async () => {
    const dir = path.join(tmp, 'gltf');
    const { json, bin } = plainQuad();
    const input = await writeGltf(dir, 'quad', json, bin);
    fs.mkdirSync(path.join(dir, 'tex'), { recursive: true });
    fs.writeFileSync(path.join(dir, 'tex', 'colour.png'), PNG_BYTES);
    const out = path.join(tmp, 'gltf-out');
    const r = await runCli(['bake', dir, '-o', out, '--jobs', '1', '--file-timeout', '0', '--quiet'], tmp);
    expect(r.code, r.stderr).toBe(0);
    for (const rel of ['quad.gltf', 'quad.bin', 'tex/colour.png']) {
      expect(bytesOf(path.join(out, rel)).equals(bytesOf(path.join(dir, rel))), rel).toBe(true);
    }
    expect(input.endsWith('quad.gltf')).toBe(true);
  });

  it('is encoded, not copied, when its .bin would replace a different file already in the output folder', async () => {
    // A copy renames the buffer before the JSON: a reader in between would see the old JSON over
    // the new buffer. The encoder's layout is used instead.
    const dir = path.join(tmp, 'gltf-over');
    const { json, bin } = plainQuad();
    delete json.images;
    delete json.textures;
    delete json.materials[0].pbrMetallicRoughness;
    await writeGltf(dir, 'quad', json, bin);
    const out = path.join(tmp, 'gltf-over-out');
    fs.mkdirSync(out, { recursive: true });
    const stale = new Uint8Array(bin.length + 8).fill(7);
    fs.writeFileSync(path.join(out, 'quad.bin'), stale);
    fs.writeFileSync(path.join(out, 'quad.gltf'), JSON.stringify({ asset: { version: '2.0' }, buffers: [{ uri: 'quad.bin', byteLength: stale.length }] }));
    const r = await runCli(['bake', dir, '-o', out, '--jobs', '1', '--file-timeout', '0', '--json'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files[0].notes).not.toContain("nothing to bake: written as the input's bytes");
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(path.join(out, 'quad.gltf'));
    expect(v.errors, v.messages.join('; ')).toBe(0);
  });

  it('is copied when --keep-existing keeps every stored tangent', async () => {
    const dir = path.join(tmp, 'kept');
    // A grid whose stored tangents are the exact frame (gridAsset): all valid, all kept.
    const input = await writeGridGlb(dir, 'grid', gridAsset(2, true));
    const out = path.join(tmp, 'kept-out.glb');
    const r = await runCli(['bake', input, '-o', out, '--keep-existing', '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files[0].primitives[0].action).toBe('kept');
    expect(bytesOf(out).equals(bytesOf(input))).toBe(true);
  });

  it('is baked, not copied, when one primitive changes', async () => {
    const dir = path.join(tmp, 'baked');
    const input = await writeGridGlb(dir, 'grid', gridAsset(2, false));
    const out = path.join(tmp, 'baked-out.glb');
    const r = await runCli(['bake', input, '-o', out, '--jobs', '1', '--file-timeout', '0', '--quiet'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(bytesOf(out).equals(bytesOf(input))).toBe(false);
  });

  it('is re-encoded when --format asks for another container', async () => {
    const dir = path.join(tmp, 'convert');
    const { json, bin } = plainQuad();
    delete json.images;
    delete json.textures;
    delete json.materials[0].pbrMetallicRoughness;
    fs.mkdirSync(dir, { recursive: true });
    const input = path.join(dir, 'quad.glb');
    fs.writeFileSync(input, glbBytes(json, bin));
    const out = path.join(tmp, 'convert-out', 'quad.gltf');
    const r = await runCli(['bake', input, '-o', out, '--format', 'gltf', '--jobs', '1', '--file-timeout', '0', '--quiet'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(fs.readFileSync(out, 'utf8')).buffers[0].uri).toMatch(/^quad\.[0-9a-f]{16}\.bin$/);
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors, v.messages.join('; ')).toBe(0);
  });

  it('is left untouched by --in-place: same bytes, same modification time', async () => {
    const dir = path.join(tmp, 'inplace');
    const { json, bin } = plainQuad();
    delete json.images;
    delete json.textures;
    delete json.materials[0].pbrMetallicRoughness;
    fs.mkdirSync(dir, { recursive: true });
    const input = path.join(dir, 'quad.glb');
    const original = glbBytes(json, bin);
    fs.writeFileSync(input, original);
    const old = new Date('2020-01-02T03:04:05Z');
    fs.utimesSync(input, old, old);
    const r = await runCli(['bake', input, '--in-place', '--json', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).files[0].notes).toContain('nothing to bake: left as it was');
    expect(bytesOf(input).equals(Buffer.from(original))).toBe(true);
    expect(fs.statSync(input).mtimeMs).toBe(old.getTime());
    expect(fs.readdirSync(dir)).toEqual(['quad.glb']);
  });

  it.skipIf(!samplesPresent)('keeps a Draco file with nothing to bake as it was (it grew tenfold when re-encoded)', async () => {
    // Source: shared Khronos sample Box/glTF-Draco (KHR_draco_mesh_compression, no normal texture).
    const src = path.join(samples, 'Box', 'glTF-Draco');
    const out = path.join(tmp, 'draco-out');
    const r = await runCli(['bake', path.join(src, 'Box.gltf'), '-o', path.join(out, 'Box.gltf'), '--jobs', '1', '--file-timeout', '0', '--quiet'], tmp);
    expect(r.code, r.stderr).toBe(0);
    for (const rel of ['Box.gltf', 'Box.bin']) expect(bytesOf(path.join(out, rel)).equals(bytesOf(path.join(src, rel))), rel).toBe(true);
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(path.join(out, 'Box.gltf'));
    expect(v.errors, v.messages.join('; ')).toBe(0);
  });
});
