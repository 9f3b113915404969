// Compressed geometry in, uncompressed geometry out: KHR_draco_mesh_compression and
// EXT_meshopt_compression / KHR_meshopt_compression decoded by the reader and written plain.
import { existsSync, readFileSync } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeFilesAtomic } from '../../src/io/files.js';
import { readGltf } from '../../src/io/gltfRead.js';
import { encodeGltf } from '../../src/io/gltfWrite.js';
import type { Asset, AttributeData, PrimitiveData } from '../../src/mesh/asset.js';
import { toFloat32 } from '../../src/mesh/decode.js';
import { runCli } from '../helpers/cli.js';
import { dracoEncode, meshoptEncode } from '../helpers/compress.js';
import { glbBytes, writeGlb, writeGltf } from '../helpers/gltfBuilder.js';
import { validateGltfFile } from '../helpers/validate.js';

let root: string;
let n = 0;
const dir = () => path.join(root, `case${n++}`);

beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-compress-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A 3 x 2 grid of vertices in the z = 0 plane, four triangles:
//   3 ---- 4 ---- 5
//   |    / |    / |
//   |  /   |  /   |
//   0 ---- 1 ---- 2
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 0, 1, 0, 1, 1, 0, 2, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV = new Float32Array([0, 1, 0.5, 1, 1, 1, 0, 0, 0.5, 0, 1, 0]);
const IDX = new Uint32Array([0, 1, 4, 0, 4, 3, 1, 2, 5, 1, 5, 4]);

/** Per triangle corner, the float values of attribute `a` (triangles in stored order). */
function corners(p: PrimitiveData, a: AttributeData): number[][] {
  const v = toFloat32(a);
  const k = a.itemSize;
  const idx = p.indices ?? Uint32Array.from({ length: v.length / k }, (_, i) => i);
  return Array.from(idx, (i) => Array.from(v.subarray(i * k, (i + 1) * k)));
}

/** Each triangle rotated to start at its smallest index (the meshopt triangle codec may rotate corners, keeping the winding). */
function rotated(idx: Uint32Array): number[][] {
  const out: number[][] = [];
  for (let t = 0; t < idx.length; t += 3) {
    const tri = [idx[t], idx[t + 1], idx[t + 2]];
    const k = tri.indexOf(Math.min(...tri));
    out.push([tri[k], tri[(k + 1) % 3], tri[(k + 2) % 3]]);
  }
  return out;
}

/** Triangles as sorted lists of "x,y,z|u,v" corner keys, sorted: independent of vertex and triangle order. */
function triangleSet(p: PrimitiveData): string[] {
  const pos = corners(p, p.attributes.POSITION);
  const uv = p.attributes.TEXCOORD_0 ? corners(p, p.attributes.TEXCOORD_0) : pos.map(() => []);
  const key = (c: number) => `${pos[c].map((x) => x.toFixed(4)).join(',')}|${uv[c].map((x) => x.toFixed(4)).join(',')}`;
  const out: string[] = [];
  for (let t = 0; t < pos.length / 3; t++) out.push([key(3 * t), key(3 * t + 1), key(3 * t + 2)].sort().join(' '));
  return out.sort();
}

/** A one-primitive glTF whose geometry lives only in a Draco stream (accessors without bufferView). */
async function dracoGltf(method: 'sequential' | 'edgebreaker', twoPrimitives = false): Promise<{ json: any; bin: Uint8Array }> {
  const { bytes, ids } = await dracoEncode({ positions: POS, normals: NRM, uvs: UV, indices: IDX, method });
  const bin = new Uint8Array((bytes.length + 3) & ~3);
  bin.set(bytes);
  const prim = () => ({
    attributes: { POSITION: 0, NORMAL: 1, TEXCOORD_0: 2 },
    indices: 3,
    material: 0,
    extensions: { KHR_draco_mesh_compression: { bufferView: 0, attributes: { POSITION: ids.POSITION, NORMAL: ids.NORMAL, TEXCOORD_0: ids.TEXCOORD_0 } } },
  });
  const json = {
    asset: { version: '2.0' },
    extensionsUsed: ['KHR_draco_mesh_compression'],
    extensionsRequired: ['KHR_draco_mesh_compression'],
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ mesh: 0 }],
    meshes: [{ primitives: twoPrimitives ? [prim(), prim()] : [prim()] }],
    materials: [{ name: 'plain' }],
    accessors: [
      { componentType: 5126, count: 6, type: 'VEC3', min: [0, 0, 0], max: [2, 1, 0] },
      { componentType: 5126, count: 6, type: 'VEC3' },
      { componentType: 5126, count: 6, type: 'VEC2' },
      { componentType: 5125, count: 12, type: 'SCALAR' },
    ],
    bufferViews: [{ buffer: 0, byteOffset: 0, byteLength: bytes.length }],
    buffers: [{ byteLength: bin.length }],
  };
  return { json, bin };
}

async function encodeTo(asset: Asset, format: 'glb' | 'gltf'): Promise<string> {
  const outPath = path.join(dir(), `out.${format}`);
  await writeFilesAtomic(encodeGltf(asset, new Map(), { format, outPath }));
  return outPath;
}

describe('KHR_draco_mesh_compression', () => {
  it('decodes a sequentially encoded stream to exactly the encoded vertices and triangles', async () => {
    const { json, bin } = await dracoGltf('sequential');
    const asset = await readGltf(await writeGlb(dir(), 'd', json, bin));
    const p = asset.primitives[0];
    // Source: the values handed to the Draco encoder (lossless floats, sequential order kept).
    expect(p.attributes.POSITION.array).toEqual(POS);
    expect(p.attributes.NORMAL.array).toEqual(NRM);
    expect(p.attributes.TEXCOORD_0.array).toEqual(UV);
    expect(p.indices).toEqual(IDX);
    expect(asset.decompressed).toEqual(['KHR_draco_mesh_compression']);
  });

  it('decodes an edgebreaker stream to the same triangles (in its own vertex order)', async () => {
    const { json, bin } = await dracoGltf('edgebreaker');
    const asset = await readGltf(await writeGlb(dir(), 'd', json, bin));
    const expected = triangleSet({ ...asset.primitives[0], attributes: { POSITION: { array: POS, itemSize: 3, type: 'VEC3', componentType: 5126, normalized: false }, TEXCOORD_0: { array: UV, itemSize: 2, type: 'VEC2', componentType: 5126, normalized: false } }, indices: IDX });
    expect(triangleSet(asset.primitives[0])).toEqual(expected);
  });

  for (const format of ['glb', 'gltf'] as const) {
    it(`writes ${format} uncompressed: extension gone everywhere, corners unchanged, validator clean`, async () => {
      const { json, bin } = await dracoGltf('edgebreaker', true);
      const input = await readGltf(await writeGlb(dir(), 'd', json, bin));
      const out = await encodeTo(input, format);
      const back = await readGltf(out);
      expect(back.json.extensionsUsed).toBeUndefined();
      expect(back.json.extensionsRequired).toBeUndefined();
      for (const prim of back.json.meshes[0].primitives) expect(prim.extensions).toBeUndefined();
      expect(back.decompressed ?? []).toEqual([]);
      for (let i = 0; i < 2; i++) {
        for (const sem of ['POSITION', 'NORMAL', 'TEXCOORD_0']) {
          expect(corners(back.primitives[i], back.primitives[i].attributes[sem])).toEqual(corners(input.primitives[i], input.primitives[i].attributes[sem]));
        }
      }
      // Both primitives used the same stream and accessors: written once, shared.
      const [a, b] = back.json.meshes[0].primitives;
      expect(a.attributes).toEqual(b.attributes);
      expect(a.indices).toBe(b.indices);
      // Source: Khronos gltf-validator.
      const v = await validateGltfFile(out);
      expect(v.errors, v.messages.join('\n')).toBe(0);
    });
  }

  it('with --compression none the file report and the printed summary note the decompression; the default keeps Draco without a note', async () => {
    const { json, bin } = await dracoGltf('sequential');
    const d = dir();
    const input = await writeGlb(d, 'd', json, bin);
    const bake = await runCli(['bake', input, '-o', path.join(d, 'out.glb'), '--all-primitives', '--compression', 'none', '--report', path.join(d, 'r.json')], d);
    expect(bake.code).toBe(0);
    expect(bake.stdout).toContain('decompressed KHR_draco_mesh_compression (written uncompressed: --compression none)');
    const report = JSON.parse(readFileSync(path.join(d, 'r.json'), 'utf8'));
    expect(report.files[0].notes).toEqual(['decompressed KHR_draco_mesh_compression (written uncompressed: --compression none)']);
    expect(report.files[0].primitives[0].compression).toEqual({ in: 'draco', out: 'none' });
    expect(report.options.compression).toBe('none');
    const kept = await runCli(['bake', input, '-o', path.join(d, 'kept.glb'), '--all-primitives', '--json'], d);
    expect(kept.code).toBe(0);
    const keptFile = JSON.parse(kept.stdout).files[0];
    expect(keptFile.notes).toEqual([]);
    expect(keptFile.primitives[0].compression).toEqual({ in: 'draco', out: 'draco' });
    const audit = await runCli(['audit', input, '--json'], d);
    expect(JSON.parse(audit.stdout).files[0].notes).toEqual(['decompressed KHR_draco_mesh_compression']);
    // A plain file has no notes.
    const plain = await runCli(['audit', path.join(d, 'out.glb'), '--json'], d);
    expect(JSON.parse(plain.stdout).files[0].notes).toEqual([]);
  });

  it('refuses an extension attribute the primitive does not have', async () => {
    const { json, bin } = await dracoGltf('sequential');
    json.meshes[0].primitives[0].extensions.KHR_draco_mesh_compression.attributes.COLOR_0 = 7;
    await expect(readGltf(await writeGlb(dir(), 'd', json, bin))).rejects.toMatchObject({ code: 'bad-gltf', message: expect.stringMatching(/COLOR_0 is not an attribute/) });
  });

  it('refuses a stream holding more triangles than the primitive declares, from its header (before decoding)', async () => {
    for (const method of ['sequential', 'edgebreaker'] as const) {
      const { json, bin } = await dracoGltf(method);
      json.accessors[3].count = 3;
      await expect(readGltf(await writeGlb(dir(), 'd', json, bin))).rejects.toMatchObject({ code: 'bad-draco', message: expect.stringMatching(/stream holds 4 triangles but the primitive declares 1/) });
    }
  });

  it('refuses a truncated stream header and a point cloud with bad-draco', async () => {
    const { json, bin } = await dracoGltf('sequential');
    json.bufferViews[0].byteLength = 9;
    await expect(readGltf(await writeGlb(dir(), 'd', json, bin))).rejects.toMatchObject({ code: 'bad-draco', message: expect.stringMatching(/header is truncated/) });
    const cloud = await dracoGltf('sequential');
    // Source: Draco bitstream specification, header byte 7: encoder type (0 point cloud, 1 mesh).
    cloud.bin[7] = 0;
    await expect(readGltf(await writeGlb(dir(), 'd', cloud.json, cloud.bin))).rejects.toMatchObject({ code: 'bad-draco', message: expect.stringMatching(/point cloud/) });
  });

  it('refuses a stream whose vertex count differs from the accessors', async () => {
    const { json, bin } = await dracoGltf('sequential');
    json.accessors[0].count = 5;
    // Refused from the stream's header, before the decoder runs.
    await expect(readGltf(await writeGlb(dir(), 'd', json, bin))).rejects.toMatchObject({ code: 'bad-draco', message: expect.stringMatching(/stream holds 6 vertices but accessor 0 \(POSITION\) declares 5/) });
  });
});

/**
 * A glTF whose POSITION, TEXCOORD_0 and index views are meshopt-compressed into buffer 0, their
 * uncompressed home being fallback buffer 1 (no data).
 */
async function meshoptGltf(ext: 'EXT_meshopt_compression' | 'KHR_meshopt_compression'): Promise<{ json: any; bin: Uint8Array }> {
  const idx16 = Uint16Array.from(IDX);
  const streams = [
    { data: new Uint8Array(POS.buffer.slice(0)), count: 6, stride: 12, mode: 'ATTRIBUTES' as const },
    { data: new Uint8Array(UV.buffer.slice(0)), count: 6, stride: 8, mode: 'ATTRIBUTES' as const },
    { data: new Uint8Array(idx16.buffer.slice(0)), count: 12, stride: 2, mode: 'TRIANGLES' as const },
  ];
  const parts: Uint8Array[] = [];
  const views: any[] = [];
  let compressed = 0;
  let plain = 0;
  for (const s of streams) {
    const enc = await meshoptEncode(s.data, s.count, s.stride, s.mode);
    parts.push(enc);
    views.push({
      buffer: 1, byteOffset: plain, byteLength: s.count * s.stride,
      ...(s.mode === 'ATTRIBUTES' ? { byteStride: s.stride, target: 34962 } : { target: 34963 }),
      extensions: { [ext]: { buffer: 0, byteOffset: compressed, byteLength: enc.length, byteStride: s.stride, count: s.count, mode: s.mode } },
    });
    compressed = (compressed + enc.length + 3) & ~3;
    plain = (plain + s.count * s.stride + 3) & ~3;
  }
  const bin = new Uint8Array(compressed);
  let at = 0;
  for (const p of parts) {
    bin.set(p, at);
    at = (at + p.length + 3) & ~3;
  }
  const json = {
    asset: { version: '2.0' },
    extensionsUsed: [ext],
    extensionsRequired: [ext],
    scene: 0,
    scenes: [{ nodes: [0] }],
    nodes: [{ mesh: 0 }],
    meshes: [{ primitives: [{ attributes: { POSITION: 0, TEXCOORD_0: 1 }, indices: 2 }] }],
    accessors: [
      { bufferView: 0, componentType: 5126, count: 6, type: 'VEC3', min: [0, 0, 0], max: [2, 1, 0] },
      { bufferView: 1, componentType: 5126, count: 6, type: 'VEC2' },
      { bufferView: 2, componentType: 5123, count: 12, type: 'SCALAR' },
    ],
    bufferViews: views,
    buffers: [{ byteLength: bin.length }, { byteLength: plain, extensions: { [ext]: { fallback: true } } }],
  };
  return { json, bin };
}

describe('meshopt compression', () => {
  for (const ext of ['EXT_meshopt_compression', 'KHR_meshopt_compression'] as const) {
    it(`${ext}: decodes views into their fallback buffer; writes them plain and validator clean`, async () => {
      const { json, bin } = await meshoptGltf(ext);
      const asset = await readGltf(await writeGlb(dir(), 'm', json, bin));
      const p = asset.primitives[0];
      // Source: the values handed to the meshopt encoder (lossless for these modes and no filter).
      expect(p.attributes.POSITION.array).toEqual(POS);
      expect(p.attributes.TEXCOORD_0.array).toEqual(UV);
      expect(rotated(p.indices!)).toEqual(rotated(IDX));
      expect(asset.decompressed).toEqual([ext]);
      const out = await encodeTo(asset, 'glb');
      const back = await readGltf(out);
      expect(back.json.extensionsUsed).toBeUndefined();
      expect(back.json.buffers).toHaveLength(1);
      expect(JSON.stringify(back.json)).not.toContain('meshopt');
      expect(back.primitives[0].attributes.POSITION.array).toEqual(POS);
      expect(back.primitives[0].indices).toEqual(p.indices);
      if (ext === 'EXT_meshopt_compression') {
        // Source: Khronos gltf-validator (knows EXT_meshopt_compression).
        const v = await validateGltfFile(out);
        expect(v.errors, v.messages.join('\n')).toBe(0);
      }
    });
  }

  it('a .gltf whose fallback buffer names a file that is absent still decodes', async () => {
    const { json, bin } = await meshoptGltf('EXT_meshopt_compression');
    json.buffers[1].uri = 'fallback.bin';
    const asset = await readGltf(await writeGltf(dir(), 'm', json, bin));
    expect(asset.primitives[0].attributes.POSITION.array).toEqual(POS);
  });

  it('refuses a plain view reading a fallback buffer that has no data', async () => {
    const { json, bin } = await meshoptGltf('EXT_meshopt_compression');
    delete json.bufferViews[1].extensions;
    await expect(readGltf(await writeGlb(dir(), 'm', json, bin))).rejects.toMatchObject({ code: 'bad-gltf', message: expect.stringMatching(/reads fallback buffer 1, which has no data/) });
  });

  it('refuses malformed extension objects and undecodable streams', async () => {
    const cases: [(j: any) => void, RegExp][] = [
      [(j) => { j.bufferViews[0].extensions.EXT_meshopt_compression.mode = 'SOUP'; }, /mode "SOUP"/],
      [(j) => { j.bufferViews[0].extensions.EXT_meshopt_compression.byteStride = 6; }, /byteStride 6/],
      [(j) => { j.bufferViews[0].extensions.EXT_meshopt_compression.buffer = 9; }, /buffer 9 does not exist/],
      [(j) => { j.bufferViews[0].extensions.EXT_meshopt_compression.count = 600; }, /do not fit/],
      [(j) => { j.bufferViews[0].extensions.EXT_meshopt_compression.byteLength = 3; }, /does not decode/],
    ];
    for (const [mutate, message] of cases) {
      const { json, bin } = await meshoptGltf('EXT_meshopt_compression');
      mutate(json);
      const file = path.join(dir(), 'm.glb');
      await writeFilesAtomic([{ path: file, bytes: glbBytes(json, bin) }]);
      await expect(readGltf(file)).rejects.toMatchObject({ code: 'bad-gltf', message: expect.stringMatching(message) });
    }
  });
});

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const samples = path.resolve(repoRoot, '../shared/datasets/gltf-samples');
const present = existsSync(samples);
if (!present) console.warn(`SKIPPED: Draco sample comparison: glTF sample assets not found at ${samples}`);

describe.skipIf(!present)('Draco samples against their uncompressed variants', () => {
  for (const [draco, plain] of [
    ['Box/glTF-Draco/Box.gltf', 'Box/glTF-Binary/Box.glb'],
    ['Duck/glTF-Draco/Duck.gltf', 'Duck/glTF-Binary/Duck.glb'],
  ]) {
    it(`${draco}: same triangles as ${plain} (within the Draco quantization step)`, async () => {
      // Source: the sample set's uncompressed variant of the same model (Khronos glTF sample assets).
      const a = await readGltf(path.join(samples, draco));
      const b = await readGltf(path.join(samples, plain));
      const pa = a.primitives[0];
      const pb = b.primitives[0];
      expect(pa.indices!.length).toBe(pb.indices!.length);
      expect(pa.attributes.POSITION.array.length).toBe(pb.attributes.POSITION.array.length);
      const extent = (p: PrimitiveData) => {
        const v = p.attributes.POSITION.array;
        let m = 0;
        for (let i = 0; i < v.length; i++) m = Math.max(m, Math.abs(v[i]));
        return m;
      };
      // Each decoded position lies within a few quantization steps (>= 11 bits over the extent) of some original position.
      const tol = (4 * extent(pb)) / 2047;
      const orig = pb.attributes.POSITION.array;
      const dec = pa.attributes.POSITION.array;
      let worst = 0;
      for (let i = 0; i < dec.length; i += 3) {
        let best = Infinity;
        for (let j = 0; j < orig.length; j += 3) {
          const d = Math.hypot(dec[i] - orig[j], dec[i + 1] - orig[j + 1], dec[i + 2] - orig[j + 2]);
          if (d < best) best = d;
        }
        worst = Math.max(worst, best);
      }
      expect(worst).toBeLessThan(tol);
    });
  }
});
