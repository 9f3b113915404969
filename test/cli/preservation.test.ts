// A bake changes geometry only: everything else in the file comes through, the .gltf output
// keeps external images beside it with one .bin, the GLB output embeds everything, and an
// unknown required extension is refused rather than guessed at.
import { existsSync, readdirSync } from 'node:fs';
import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGltf } from '../../src/io/gltfRead.js';
import type { Asset } from '../../src/mesh/asset.js';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, writeGlb, writeGltf } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

let root = '';
let n = 0;
beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-preserve-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane (two triangles), normal-mapped, with one morph target:
//   3 ---- 2
//   |    / |
//   |  /   |
//   0 ---- 1
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);
const PNG = encodePngRgba8(2, 2, new Uint8Array(16).fill(200));

/** Everything a bake must carry through, around one normal-mapped morphing quad. */
function richAsset(): { json: any; bin: Uint8Array } {
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: {
      POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' }, TEXCOORD_0: { array: UV, type: 'VEC2' },
      JOINTS_0: { array: new Uint8Array(16), type: 'VEC4' },
      WEIGHTS_0: { array: new Float32Array([1, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0, 1, 0, 0, 0]), type: 'VEC4' },
    },
    indices: IDX,
    material: 0,
    targets: [{ POSITION: { array: new Float32Array([0, 0, 0.5, 0, 0, 0, 0, 0, 0, 0, 0, 0]), type: 'VEC3' }, NORMAL: { array: new Float32Array(12), type: 'VEC3' } }],
  });
  const j = b.json;
  const ident = new Float32Array(16);
  for (let d = 0; d < 4; d++) ident[d * 5] = 1;
  const ibm = b.addAccessor(ident, 'MAT4');
  const times = b.addAccessor(new Float32Array([0, 1]), 'SCALAR', { minMax: true });
  const moves = b.addAccessor(new Float32Array([0, 0, 0, 0, 2, 0]), 'VEC3');
  const weights = b.addAccessor(new Float32Array([0, 1]), 'SCALAR');
  const inst = b.addAccessor(new Float32Array([0, 0, 0, 3, 0, 0]), 'VEC3');
  j.asset.extras = { pipeline: 'test' };
  j.asset.copyright = 'CC0';
  j.meshes[0].weights = [0.25];
  j.meshes[0].name = 'quad';
  j.meshes[0].extras = { targetNames: ['lift'] };
  j.meshes[0].primitives[0].extras = { lod: 0 };
  j.nodes[0].skin = 0;
  j.nodes[0].extras = { role: 'skinned' };
  j.nodes.push({ name: 'joint', translation: [0, 1, 0], extras: { bone: true } });
  j.nodes.push({ name: 'instanced', mesh: 0, extensions: { EXT_mesh_gpu_instancing: { attributes: { TRANSLATION: inst } } } });
  j.nodes.push({ name: 'eye', camera: 0, rotation: [0, 0.7071068, 0, 0.7071068] });
  j.nodes.push({ name: 'lamp', extensions: { KHR_lights_punctual: { light: 0 } }, matrix: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 5, 0, 1] });
  j.scenes[0].nodes.push(1, 2, 3, 4);
  j.scenes[0].extras = { lit: true };
  j.scenes[0].name = 'main';
  j.skins = [{ inverseBindMatrices: ibm, joints: [1], name: 'rig', extras: { k: 1 } }];
  j.animations = [{
    name: 'wave',
    samplers: [{ input: times, output: moves, interpolation: 'LINEAR' }, { input: times, output: weights, interpolation: 'STEP' }],
    channels: [{ sampler: 0, target: { node: 1, path: 'translation' } }, { sampler: 1, target: { node: 0, path: 'weights' } }],
    extras: { loop: true },
  }];
  j.cameras = [{ type: 'perspective', perspective: { yfov: 0.8, znear: 0.01, aspectRatio: 1.5 }, extras: { lens: 35 } }];
  j.samplers = [{ magFilter: 9729, wrapS: 33648, extras: { s: 1 } }];
  j.images = [{ uri: 'tex/normal%20map.png', name: 'nrm', extras: { i: 2 } }];
  j.textures = [{ sampler: 0, source: 0, extras: { t: 3 } }];
  j.materials[0] = {
    name: 'painted',
    normalTexture: { index: 0, scale: 0.8, extras: { ti: 1 } },
    pbrMetallicRoughness: { baseColorFactor: [1, 0.5, 0.25, 1], metallicFactor: 0 },
    extensions: { VENDOR_shiny: { level: 3, nested: { list: [1, 'two', null, { deep: true }] } }, KHR_materials_clearcoat: { clearcoatFactor: 0.5 } },
    extras: { m: 4 },
  };
  j.extensions = { VENDOR_shiny: { global: true }, KHR_lights_punctual: { lights: [{ type: 'point', color: [1, 0.9, 0.8], intensity: 20 }] } };
  j.extras = { top: 'level' };
  j.extensionsUsed = ['VENDOR_shiny', 'EXT_mesh_gpu_instancing', 'KHR_lights_punctual', 'KHR_materials_clearcoat'];
  return b.build();
}

/** The JSON with every accessor / bufferView / buffer reference replaced by what it holds. */
function comparable(a: Asset): any {
  const json = structuredClone(a.json);
  const acc = (i: number) => {
    const x = a.json.accessors[i];
    const v = a.json.bufferViews?.[x.bufferView];
    const bytes = v ? Array.from(a.buffers[v.buffer].subarray((v.byteOffset ?? 0) + (x.byteOffset ?? 0), (v.byteOffset ?? 0) + v.byteLength)) : null;
    return { type: x.type, componentType: x.componentType, count: x.count, min: x.min, max: x.max, bytes };
  };
  for (const s of json.skins ?? []) s.inverseBindMatrices = acc(s.inverseBindMatrices);
  for (const an of json.animations ?? []) for (const s of an.samplers) { s.input = acc(s.input); s.output = acc(s.output); }
  for (const node of json.nodes ?? []) {
    const attrs = node.extensions?.EXT_mesh_gpu_instancing?.attributes;
    if (attrs) for (const k of Object.keys(attrs)) attrs[k] = acc(attrs[k]);
  }
  for (const m of json.meshes ?? []) for (const p of m.primitives) { delete p.attributes; delete p.indices; delete p.targets; }
  for (const img of json.images ?? []) if (img.bufferView !== undefined) img.bufferView = 'embedded';
  delete json.accessors;
  delete json.bufferViews;
  delete json.buffers;
  return json;
}

async function richFiles(kind: 'glb' | 'gltf'): Promise<{ dir: string; input: string }> {
  const dir = path.join(root, `case${n++}`);
  const { json, bin } = richAsset();
  await mkdir(path.join(dir, 'tex'), { recursive: true });
  await writeFile(path.join(dir, 'tex', 'normal map.png'), PNG);
  return { dir, input: kind === 'glb' ? await writeGlb(dir, 'rich', json, bin) : await writeGltf(dir, 'rich', json, bin) };
}

describe('everything but the baked geometry is preserved', () => {
  it('nodes, instancing, skins, animations (morph weights too), cameras, lights, materials, textures, samplers, images, extras and unknown extensions', async () => {
    const { dir, input } = await richFiles('gltf');
    const out = path.join(dir, 'out', 'rich.gltf');
    const r = await runCli(['bake', input, '-o', out], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const a = await readGltf(input);
    const b = await readGltf(out);
    const ca = comparable(a);
    const cb = comparable(b);
    expect(cb).toEqual(ca);
    // Key order is kept too (the JSON is edited in place, not rebuilt).
    expect(JSON.stringify(cb)).toBe(JSON.stringify(ca));
    expect(b.json.meshes[0].primitives[0].attributes.TANGENT).toBeDefined();
    expect(Object.keys(b.json.meshes[0].primitives[0].targets[0]).sort()).toEqual(['NORMAL', 'POSITION', 'TANGENT']);
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors, v.messages.join('\n')).toBe(0);
  });

  it('.gltf output: one .bin, the external image copied beside it at its relative URI', async () => {
    const { dir, input } = await richFiles('glb');
    const outDir = path.join(dir, 'out');
    const r = await runCli(['bake', input, '-o', path.join(outDir, 'baked.gltf'), '--format', 'gltf'], dir);
    expect(r.code).toBe(0);
    const written = readdirSync(outDir, { recursive: true }).map(String).sort();
    const bin = written[0];
    expect(bin).toMatch(/^baked\.[0-9a-f]{16}\.bin$/); // named by its content
    expect(written.slice(1)).toEqual(['baked.gltf', 'tex', path.join('tex', 'normal map.png')]);
    expect(new Uint8Array(await readFile(path.join(outDir, 'tex', 'normal map.png')))).toEqual(PNG);
    const json = JSON.parse(await readFile(path.join(outDir, 'baked.gltf'), 'utf8'));
    expect(json.buffers).toEqual([{ byteLength: json.buffers[0].byteLength, uri: bin }]);
    expect(json.images[0].uri).toBe('tex/normal%20map.png');
    expect((await validateGltfFile(path.join(outDir, 'baked.gltf'))).errors).toBe(0);
  });

  it('GLB output embeds everything: the image moves into the buffer and nothing else is written', async () => {
    const { dir, input } = await richFiles('gltf');
    const outDir = path.join(dir, 'out');
    const r = await runCli(['bake', input, '-o', path.join(outDir, 'baked.glb'), '--format', 'glb'], dir);
    expect(r.code).toBe(0);
    expect(readdirSync(outDir)).toEqual(['baked.glb']);
    const b = await readGltf(path.join(outDir, 'baked.glb'));
    expect(b.json.buffers).toHaveLength(1);
    expect(b.json.buffers[0].uri).toBeUndefined();
    const img = b.json.images[0];
    expect(img.uri).toBeUndefined();
    expect(img.mimeType).toBe('image/png');
    const v = b.json.bufferViews[img.bufferView];
    expect(b.buffers[0].subarray(v.byteOffset, v.byteOffset + v.byteLength)).toEqual(PNG);
    expect((await validateGltfFile(path.join(outDir, 'baked.glb'))).errors).toBe(0);
  });

  it('an unknown required extension is refused with a one-line reason naming it; nothing is written', async () => {
    const dir = path.join(root, `case${n++}`);
    const b = new GltfBuilder();
    b.addPrimitive({ attributes: { POSITION: { array: POS, type: 'VEC3' }, TEXCOORD_0: { array: UV, type: 'VEC2' } }, indices: IDX });
    b.json.meshes[0].primitives[0].extensions = { VENDOR_packed_geometry: { stream: 0 } };
    const { json, bin } = b.build({ extensionsUsed: ['VENDOR_packed_geometry'], extensionsRequired: ['VENDOR_packed_geometry'] });
    const input = await writeGlb(dir, 'packed', json, bin);
    const out = path.join(dir, 'out.glb');
    const rep = path.join(dir, 'report.json');
    const r = await runCli(['bake', input, '-o', out, '--all-primitives', '--report', rep], dir);
    // Source: DESIGN.md exit status: 3 when an input could not be processed.
    expect(r.code).toBe(3);
    expect(r.stderr).toMatch(/VENDOR_packed_geometry/);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(existsSync(out)).toBe(false);
    const report = JSON.parse(await readFile(rep, 'utf8'));
    expect(report.files[0].error.code).toBe('unsupported-feature');
    expect(report.files[0].error.message).toMatch(/required extension VENDOR_packed_geometry is not supported/);
  });
});
