import { mkdir, mkdtemp, readFile, rm, writeFile } from 'node:fs/promises';
import { existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { outputParts, writeFilesAtomic } from '../../src/io/files.js';
import { readGltf } from '../../src/io/gltfRead.js';
import { encodeGltf, encodeGltfParts } from '../../src/io/gltfWrite.js';
import type { Asset, AttributeData, PrimitiveData, PrimitiveReplacement } from '../../src/mesh/asset.js';
import { GltfBuilder, minMax, writeGlb, writeGltf, type BuildPrimitive } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

let root: string;
let caseNo = 0;
const dir = () => path.join(root, `case${caseNo++}`);

beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-write-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane, two triangles:
//   3 ---- 2
//   |    / |
//   |  /   |
//   0 ---- 1
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);
const CORNERS = [0, 1, 2, 0, 2, 3];

/** Non-indexed copy of an array of itemSize-wide elements, one element per corner of IDX. */
function unweld<T extends Float32Array | Uint8Array | Uint16Array>(a: T, itemSize: number): T {
  const out = new (a.constructor as any)(CORNERS.length * itemSize);
  CORNERS.forEach((v, i) => out.set(a.subarray(v * itemSize, (v + 1) * itemSize), i * itemSize));
  return out;
}

const PNG = encodePngRgba8(2, 2, new Uint8Array(16).fill(200));

/**
 * The "rich" asset: everything the writer must carry through.
 * mesh 0 prim 0: interleaved quad, unsigned short normalized UVs, byte colours, material 0 (normal map)
 * mesh 0 prim 1: non-indexed quad (6 corners) with a sparse POSITION
 * mesh 1 prim 0: quad with one morph target (POSITION + NORMAL deltas) and mesh.weights
 * plus: a skin (inverse bind matrices), an animation (input/output), an EXT_mesh_gpu_instancing
 * node, an orphan accessor, a camera, a sampler/texture/image (external PNG), extras and an
 * unknown vendor extension.
 */
function richAsset(): { json: any; bin: Uint8Array } {
  const b = new GltfBuilder();
  const uv16 = new Uint16Array([0, 65535, 65535, 65535, 65535, 0, 0, 0]);
  const color = new Uint8Array([255, 0, 0, 255, 0, 255, 0, 255, 0, 0, 255, 255, 9, 9, 9, 255]);
  const p0: BuildPrimitive = {
    attributes: {
      POSITION: { array: POS, type: 'VEC3' },
      NORMAL: { array: NRM, type: 'VEC3' },
      TEXCOORD_0: { array: uv16, type: 'VEC2', normalized: true },
      COLOR_0: { array: color, type: 'VEC4', normalized: true },
    },
    indices: IDX,
    material: 0,
  };
  b.addPrimitive(p0, { interleaved: true });
  const pos6 = unweld(POS, 3);
  b.addPrimitive({
    attributes: {
      POSITION: { array: pos6, type: 'VEC3', sparse: { indices: [1, 4], values: new Float32Array([2, 0, 0, 2, 2, 0]) } },
      NORMAL: { array: unweld(NRM, 3), type: 'VEC3' },
      TEXCOORD_0: { array: unweld(UV, 2), type: 'VEC2' },
    },
  });
  b.addPrimitive(
    {
      attributes: { POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' }, TEXCOORD_0: { array: UV, type: 'VEC2' } },
      indices: IDX,
      targets: [{ POSITION: { array: new Float32Array([0, 0, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0]), type: 'VEC3' }, NORMAL: { array: new Float32Array(12), type: 'VEC3' } }],
    },
    {},
    1,
  );
  const j = b.json;
  j.meshes[1].weights = [0.5];
  j.meshes[1].extras = { targetNames: ['lift'] };
  const ident = new Float32Array(32);
  for (let m = 0; m < 2; m++) for (let d = 0; d < 4; d++) ident[m * 16 + d * 5] = 1;
  const orphan = b.addAccessor(new Float32Array([1, 2, 3]), 'VEC3');
  const ibm = b.addAccessor(ident, 'MAT4');
  const input = b.addAccessor(new Float32Array([0, 1]), 'SCALAR', { minMax: true });
  const output = b.addAccessor(new Float32Array([0, 0, 0, 0, 1, 0]), 'VEC3');
  const inst = b.addAccessor(new Float32Array([0, 0, 0, 3, 0, 0]), 'VEC3');
  expect(orphan).toBeLessThan(ibm);
  j.nodes.push({ name: 'joint0', children: [3] }, { name: 'joint1', translation: [0, 1, 0] });
  j.nodes.push({ name: 'instanced', mesh: 0, extensions: { EXT_mesh_gpu_instancing: { attributes: { TRANSLATION: inst } } } });
  j.nodes.push({ name: 'camera', camera: 0, extras: { note: 'kept' } });
  j.scenes[0].nodes.push(2, 4, 5);
  j.skins = [{ inverseBindMatrices: ibm, joints: [2, 3], name: 'rig' }];
  j.animations = [{ samplers: [{ input, output, interpolation: 'LINEAR' }], channels: [{ sampler: 0, target: { node: 0, path: 'translation' } }] }];
  j.cameras = [{ type: 'perspective', perspective: { yfov: 0.8, znear: 0.01 } }];
  j.samplers = [{ magFilter: 9729 }];
  j.images = [{ uri: 'tex/normal%20map.png' }];
  j.textures = [{ sampler: 0, source: 0 }];
  j.materials[0] = { name: 'painted', normalTexture: { index: 0, texCoord: 0 }, extensions: { VENDOR_shiny: { level: 3 } } };
  j.extras = { author: 'test' };
  j.extensionsUsed = ['VENDOR_shiny', 'EXT_mesh_gpu_instancing'];
  j.extensions = { VENDOR_shiny: { global: true } };
  return b.build();
}

/** Writes the rich asset as `<dir>/rich.<container>` plus its image; returns the path. */
async function writeRich(d: string, container: 'glb' | 'gltf'): Promise<string> {
  const { json, bin } = richAsset();
  await mkdir(path.join(d, 'tex'), { recursive: true });
  await writeFile(path.join(d, 'tex', 'normal map.png'), PNG);
  return container === 'glb' ? writeGlb(d, 'rich', json, bin) : writeGltf(d, 'rich', json, bin);
}

/** Encodes and writes the files; returns the output path. */
async function encodeTo(asset: Asset, repl: Map<number, PrimitiveReplacement>, format: 'glb' | 'gltf', d = dir()): Promise<string> {
  const outPath = path.join(d, `out.${format}`);
  await writeFilesAtomic(encodeGltf(asset, repl, { format, outPath }));
  return outPath;
}

/** Per triangle corner, the element of `a` that corner uses. */
function cornerValues(indices: Uint32Array | null, a: AttributeData): number[][] {
  const n = a.itemSize;
  const count = a.array.length / n;
  const idx = indices ?? Uint32Array.from({ length: count }, (_, i) => i);
  return Array.from(idx, (v) => Array.from(a.array.subarray(v * n, (v + 1) * n)));
}

/** Everything a primitive shows per corner, with stored formats. */
function describe_(p: { indices: Uint32Array | null; attributes: Record<string, AttributeData>; targets: Record<string, AttributeData>[] }) {
  const one = (a: AttributeData) => ({ type: a.type, componentType: a.componentType, normalized: a.normalized, corners: cornerValues(p.indices, a) });
  return {
    attributes: Object.fromEntries(Object.entries(p.attributes).map(([k, a]) => [k, one(a)])),
    targets: p.targets.map((t) => Object.fromEntries(Object.entries(t).map(([k, a]) => [k, one(a)]))),
  };
}

async function expectValid(file: string, ignoredIssues: string[] = []): Promise<void> {
  // Source: Khronos gltf-validator.
  const v = await validateGltfFile(file, { ignoredIssues });
  expect(v.errors, v.messages.join('\n')).toBe(0);
}

const COUNTED = ['nodes', 'meshes', 'materials', 'textures', 'images', 'animations', 'skins', 'cameras', 'samplers', 'scenes'];
const counts = (json: any) => Object.fromEntries(COUNTED.map((k) => [k, json[k]?.length ?? 0]));

/** A replacement for prim: unwelded to one vertex per corner, TANGENT added, morph target TANGENT deltas added. */
function unweldedReplacement(p: PrimitiveData): PrimitiveReplacement {
  const idx = p.indices ?? Uint32Array.from({ length: p.attributes.POSITION.array.length / 3 }, (_, i) => i);
  const expand = (a: AttributeData): AttributeData => {
    const out = new (a.array.constructor as any)(idx.length * a.itemSize);
    idx.forEach((v, i) => out.set(a.array.subarray(v * a.itemSize, (v + 1) * a.itemSize), i * a.itemSize));
    return { ...a, array: out };
  };
  const attributes: Record<string, AttributeData> = {};
  for (const [k, a] of Object.entries(p.attributes)) attributes[k] = expand(a);
  const tangents = new Float32Array(idx.length * 4);
  for (let i = 0; i < idx.length; i++) tangents.set([1, 0, 0, i % 2 ? -1 : 1], i * 4);
  attributes.TANGENT = { array: tangents, itemSize: 4, type: 'VEC4', componentType: 5126, normalized: false };
  const targets = p.targets.map((t) => {
    const o: Record<string, AttributeData> = {};
    for (const [k, a] of Object.entries(t)) o[k] = expand(a);
    o.TANGENT = { array: new Float32Array(idx.length * 3), itemSize: 3, type: 'VEC3', componentType: 5126, normalized: false };
    return o;
  });
  // reversed corner order within the list, so new indices differ from 0..n-1
  const indices = Uint32Array.from({ length: idx.length }, (_, i) => idx.length - 1 - i);
  return { attributes, indices, targets };
}

describe('encodeGltf without replacements', () => {
  for (const from of ['glb', 'gltf'] as const) {
    for (const to of ['glb', 'gltf'] as const) {
      it(`${from} -> ${to}: validates, and every corner reads back identical`, async () => {
        const input = await readGltf(await writeRich(dir(), from));
        expect(input.warnings).toEqual([]);
        const out = await encodeTo(input, new Map(), to);
        await expectValid(out);
        const back = await readGltf(out);
        expect(back.primitives.map(describe_)).toEqual(input.primitives.map(describe_));
        expect(back.primitives.map((p) => [p.mesh, p.primitive, p.mode, p.material])).toEqual(input.primitives.map((p) => [p.mesh, p.primitive, p.mode, p.material]));
        expect(counts(back.json)).toEqual(counts(input.json));
      });
    }
  }

  it('preserves everything it does not rebuild, in the input key order, and drops only the orphan accessor', async () => {
    const input = await readGltf(await writeRich(dir(), 'gltf'));
    const out = await readGltf(await encodeTo(input, new Map(), 'gltf'));
    for (const key of ['asset', 'scene', 'scenes', 'materials', 'textures', 'samplers', 'cameras', 'images', 'extras', 'extensions', 'extensionsUsed']) {
      expect(out.json[key], key).toEqual(input.json[key]);
    }
    expect(Object.keys(out.json)).toEqual(Object.keys(input.json));
    expect(out.json.asset.generator).toBe('tanframe test builder');
    expect(out.json.meshes[1].extras).toEqual({ targetNames: ['lift'] });
    expect(out.json.nodes.map((n: any) => n.name ?? null)).toEqual(input.json.nodes.map((n: any) => n.name ?? null));
    expect(out.json.accessors).toHaveLength(input.json.accessors.length - 1);
    expect(out.json.buffers).toHaveLength(1);
    expect(out.json.buffers[0].uri).toMatch(/^out\.[0-9a-f]{16}\.bin$/); // named by its content
  });

  it('keeps skin, animation and instancing accessors pointing at the same data after renumbering', async () => {
    const input = await readGltf(await writeRich(dir(), 'glb'));
    const out = await readGltf(await encodeTo(input, new Map([[0, unweldedReplacement(input.primitives[0])]]), 'glb'));
    const floats = (a: Asset, index: number) => {
      const acc = a.json.accessors[index];
      const view = a.json.bufferViews[acc.bufferView];
      const buf = a.buffers[view.buffer];
      const n = { SCALAR: 1, VEC3: 3, MAT4: 16 }[acc.type as 'SCALAR'] * acc.count;
      const start = (view.byteOffset ?? 0) + (acc.byteOffset ?? 0);
      return Array.from(new Float32Array(buf.slice(start, start + 4 * n).buffer));
    };
    const pairs: [string, (j: any) => number][] = [
      ['inverseBindMatrices', (j) => j.skins[0].inverseBindMatrices],
      ['sampler input', (j) => j.animations[0].samplers[0].input],
      ['sampler output', (j) => j.animations[0].samplers[0].output],
      ['instancing', (j) => j.nodes[4].extensions.EXT_mesh_gpu_instancing.attributes.TRANSLATION],
    ];
    for (const [name, get] of pairs) {
      expect(floats(out, get(out.json)), name).toEqual(floats(input, get(input.json)));
    }
    expect(out.json.accessors[out.json.animations[0].samplers[0].input]).toMatchObject({ min: [0], max: [1] });
  });

  it('is deterministic: the same input gives byte-identical files', async () => {
    const file = await writeRich(dir(), 'gltf');
    const a = encodeGltf(await readGltf(file), new Map(), { format: 'glb', outPath: 'x/out.glb' });
    const b = encodeGltf(await readGltf(file), new Map(), { format: 'glb', outPath: 'x/out.glb' });
    expect(a.map((f) => f.path)).toEqual(b.map((f) => f.path));
    expect(Buffer.from(a[0].bytes).equals(Buffer.from(b[0].bytes))).toBe(true);
  });
});

describe('encodeGltfParts', () => {
  for (const to of ['glb', 'gltf'] as const) {
    it(`gives the files encodeGltf gives, byte for byte, the binary data left in its arrays (${to})`, async () => {
      const input = await readGltf(await writeRich(dir(), 'glb'));
      const outPath = `x/out.${to}`;
      const whole = encodeGltf(input, new Map(), { format: to, outPath });
      const parted = encodeGltfParts(input, new Map(), { format: to, outPath });
      expect(parted.map((f) => f.path)).toEqual(whole.map((f) => f.path));
      const binary = parted.find((f) => f.path.endsWith(to === 'glb' ? '.glb' : '.bin'))!;
      const parts = outputParts(binary);
      expect(parts.length).toBeGreaterThan(2);
      // Kept views are the input's own bytes, not copies.
      expect(parts.some((p) => p.buffer === input.buffers[0].buffer)).toBe(true);
      parted.forEach((f, i) => {
        const joined = Buffer.concat(outputParts(f).map((p) => Buffer.from(p.buffer, p.byteOffset, p.byteLength)));
        expect(joined.equals(Buffer.from(whole[i].bytes)), f.path).toBe(true);
      });
    });
  }
});

describe('encodeGltf with replacements', () => {
  for (const to of ['glb', 'gltf'] as const) {
    it(`writes new geometry with TANGENT (${to}) that validates and reads back per corner`, async () => {
      const input = await readGltf(await writeRich(dir(), 'glb'));
      const repl = new Map<number, PrimitiveReplacement>();
      input.primitives.forEach((p, i) => repl.set(i, unweldedReplacement(p)));
      const out = await encodeTo(input, repl, to);
      await expectValid(out);
      const back = await readGltf(out);
      for (let i = 0; i < input.primitives.length; i++) {
        const r = repl.get(i)!;
        expect(describe_(back.primitives[i])).toEqual(describe_({ indices: r.indices, attributes: r.attributes, targets: r.targets }));
        expect(back.primitives[i].mode).toBe(4);
      }
      // The replacement lists corners in reverse (index i -> vertex n-1-i), so the sparse
      // positions read back reversed; independent of the replacement arrays themselves.
      expect(describe_(back.primitives[1]).attributes.POSITION.corners.reverse()).toEqual(describe_(input.primitives[1]).attributes.POSITION.corners);
      expect(counts(back.json)).toEqual(counts(input.json));
    });
  }

  it('replaces only the chosen primitive and drops accessors nothing references any more', async () => {
    const input = await readGltf(await writeRich(dir(), 'gltf'));
    const out = await readGltf(await encodeTo(input, new Map([[2, unweldedReplacement(input.primitives[2])]]), 'gltf'));
    expect(describe_(out.primitives[0])).toEqual(describe_(input.primitives[0]));
    expect(describe_(out.primitives[1])).toEqual(describe_(input.primitives[1]));
    expect(out.primitives[2].attributes.TANGENT).toBeDefined();
    expect(out.primitives[2].targets[0].TANGENT.itemSize).toBe(3);
    // removed: the orphan and mesh 1's 3 attributes + indices + 2 target accessors (6);
    // added: 4 attributes + indices + 3 target accessors (8)
    expect(out.json.accessors).toHaveLength(input.json.accessors.length - 1 - 6 + 8);
    const used = new Set<number>();
    JSON.stringify(out.json, (k, v) => {
      if (['bufferView'].includes(k)) used.add(v);
      return v;
    });
    expect(used.size).toBe(out.json.bufferViews.length); // every view still referenced
  });

  it('new accessors: tight views with targets, POSITION min/max, index type by range', async () => {
    const input = await readGltf(await writeRich(dir(), 'glb'));
    const repl = unweldedReplacement(input.primitives[0]);
    const files = encodeGltf(input, new Map([[0, repl]]), { format: 'gltf', outPath: path.join(dir(), 'o.gltf') });
    const json = JSON.parse(new TextDecoder().decode(files[0].bytes));
    const prim = json.meshes[0].primitives[0];
    const pos = json.accessors[prim.attributes.POSITION];
    // Source: glTF 2.0 specification, 3.7.2.1: POSITION min/max are required and exact.
    expect({ min: pos.min, max: pos.max }).toEqual(minMax(repl.attributes.POSITION.array as Float32Array, 3));
    expect(json.accessors[prim.indices].componentType).toBe(5123);
    const tanView = json.bufferViews[json.accessors[prim.attributes.TANGENT].bufferView];
    expect(tanView.target).toBe(34962);
    expect(tanView.byteStride).toBeUndefined();
    expect(tanView.byteOffset % 4).toBe(0);
    expect(json.bufferViews[json.accessors[prim.indices].bufferView].target).toBe(34963);
    expect(Object.keys(prim.attributes)).toEqual(['POSITION', 'NORMAL', 'TEXCOORD_0', 'COLOR_0', 'TANGENT']);
  });

  it('uses unsigned int indices from index 65535 up (65535 is the reserved restart value)', async () => {
    const input = await readGltf(await writeRich(dir(), 'glb'));
    for (const [maxIndex, expected] of [[65534, 5123], [65535, 5125], [70000, 5125]] as const) {
      const count = maxIndex + 1;
      const positions = new Float32Array(count * 3);
      positions.set([0, 0, 0, 1, 0, 0], 0);
      positions.set([0, 1, 0], maxIndex * 3);
      const r: PrimitiveReplacement = {
        attributes: { POSITION: { array: positions, itemSize: 3, type: 'VEC3', componentType: 5126, normalized: false } },
        indices: new Uint32Array([0, 1, maxIndex]),
        targets: [],
      };
      const out = await encodeTo(input, new Map([[1, r]]), 'glb');
      const back = await readGltf(out);
      const acc = back.json.accessors[back.json.meshes[0].primitives[1].indices];
      expect(acc.componentType, `max index ${maxIndex}`).toBe(expected);
      expect(back.primitives[1].indices).toEqual(new Uint32Array([0, 1, maxIndex]));
    }
  });

  it('stores quantized tangents with 4-byte aligned strides and declares KHR_mesh_quantization', async () => {
    const input = await readGltf(await writeRich(dir(), 'glb'));
    const r = unweldedReplacement(input.primitives[0]);
    const t = r.attributes.TANGENT.array;
    const t16 = Int16Array.from(t, (v) => Math.round(v * 32767));
    r.attributes.TANGENT = { array: t16, itemSize: 4, type: 'VEC4', componentType: 5122, normalized: true };
    const n8 = Int8Array.from(r.attributes.NORMAL.array, (v) => Math.round(v * 127));
    r.attributes.NORMAL = { array: n8, itemSize: 3, type: 'VEC3', componentType: 5120, normalized: true };
    const out = await encodeTo(input, new Map([[0, r]]), 'glb');
    await expectValid(out);
    const back = await readGltf(out);
    expect(back.json.extensionsRequired).toContain('KHR_mesh_quantization');
    expect(back.json.extensionsUsed).toContain('KHR_mesh_quantization');
    const acc = back.json.accessors[back.json.meshes[0].primitives[0].attributes.NORMAL];
    // Source: KHR_mesh_quantization: a BYTE normal needs a stride of 4, not 3.
    expect(back.json.bufferViews[acc.bufferView].byteStride).toBe(4);
    expect(back.primitives[0].attributes.NORMAL.array).toEqual(n8);
    expect(back.primitives[0].attributes.TANGENT.array).toEqual(t16);
  });
});

describe('encodeGltf for OBJ assets (geometry only in asset.primitives)', () => {
  it('writes primitives without a replacement from their decoded data, and replaced ones from the replacement', async () => {
    const attrs = (): Record<string, AttributeData> => ({
      POSITION: { array: POS.slice(), itemSize: 3, type: 'VEC3', componentType: 5126, normalized: false },
      NORMAL: { array: NRM.slice(), itemSize: 3, type: 'VEC3', componentType: 5126, normalized: false },
    });
    const prim = (i: number): PrimitiveData => ({
      mesh: 0, primitive: i, meshName: 'obj', material: null, mode: 4, attributes: attrs(),
      indices: i === 0 ? Uint32Array.from(IDX) : null, targets: [], faces: null,
    });
    // the shape the OBJ reader synthesizes: empty attribute maps, no buffers
    const asset: Asset = {
      sourcePath: 'x.obj', container: 'obj', buffers: [], externalImages: [], warnings: [],
      json: { asset: { version: '2.0' }, scene: 0, scenes: [{ nodes: [0] }], nodes: [{ mesh: 0 }], meshes: [{ name: 'obj', primitives: [{ attributes: {}, mode: 4 }, { attributes: {}, mode: 4 }] }] },
      primitives: [prim(0), prim(1)],
    };
    const r = unweldedReplacement(asset.primitives[0]);
    const out = await encodeTo(asset, new Map([[0, r]]), 'glb');
    await expectValid(out);
    const back = await readGltf(out);
    expect(describe_(back.primitives[0])).toEqual(describe_({ indices: r.indices, attributes: r.attributes, targets: [] }));
    expect(describe_(back.primitives[1])).toEqual(describe_(asset.primitives[1]));
  });
});

describe('encodeGltf pads what glTF requires aligned', () => {
  it('writes 3-byte colours and 1-byte MAT2 columns with 4-byte alignment and reads them back', async () => {
    const input = await readGltf(await writeRich(dir(), 'glb'));
    const r = unweldedReplacement(input.primitives[0]);
    const n = r.indices.length;
    const rgb = Uint8Array.from({ length: n * 3 }, (_, i) => (i * 37) % 256);
    const mat = Uint8Array.from({ length: n * 4 }, (_, i) => (i * 11) % 256);
    r.attributes.COLOR_0 = { array: rgb, itemSize: 3, type: 'VEC3', componentType: 5121, normalized: true };
    r.attributes._M = { array: mat, itemSize: 4, type: 'MAT2', componentType: 5121, normalized: false };
    const out = await encodeTo(input, new Map([[0, r]]), 'gltf');
    await expectValid(out);
    const back = await readGltf(out);
    const json = back.json;
    const prim = json.meshes[0].primitives[0];
    // Source: glTF 2.0 specification, 3.6.2.4: vertex attribute elements 4-byte aligned; 1-byte
    // MAT2 columns each start 4-byte aligned (element = 8 bytes). Source: Khronos gltf-validator
    // (MESH_PRIMITIVE_ACCESSOR_UNALIGNED) wants the stride declared for such padded elements.
    expect(json.bufferViews[json.accessors[prim.attributes.COLOR_0].bufferView].byteStride).toBe(4);
    const mView = json.bufferViews[json.accessors[prim.attributes._M].bufferView];
    expect(mView.byteStride).toBe(8);
    expect(mView.byteLength).toBe(n * 8);
    expect(back.primitives[0].attributes.COLOR_0.array).toEqual(rgb);
    expect(back.primitives[0].attributes._M.array).toEqual(mat);
  });
});

describe('encodeGltf containers and images', () => {
  it('GLB: JSON chunk padded with spaces, BIN chunk and gaps zero, lengths consistent', async () => {
    const input = await readGltf(await writeRich(dir(), 'gltf'));
    const [file] = encodeGltf(input, new Map([[1, unweldedReplacement(input.primitives[1])]]), { format: 'glb', outPath: 'a.glb' });
    const b = file.bytes;
    const dv = new DataView(b.buffer, b.byteOffset, b.byteLength);
    // Source: glTF 2.0 specification, 4.4 (GLB header and chunks).
    expect(dv.getUint32(0, true)).toBe(0x46546c67);
    expect(dv.getUint32(4, true)).toBe(2);
    expect(dv.getUint32(8, true)).toBe(b.byteLength);
    const jsonLen = dv.getUint32(12, true);
    expect(jsonLen % 4).toBe(0);
    expect(dv.getUint32(16, true)).toBe(0x4e4f534a);
    const jsonChunk = new TextDecoder().decode(b.subarray(20, 20 + jsonLen));
    const text = jsonChunk.trimEnd();
    expect(/^ *$/.test(jsonChunk.slice(text.length))).toBe(true);
    const json = JSON.parse(text);
    const binAt = 20 + jsonLen;
    const binLen = dv.getUint32(binAt, true);
    expect(dv.getUint32(binAt + 4, true)).toBe(0x004e4942);
    expect(binAt + 8 + binLen).toBe(b.byteLength);
    expect(json.buffers[0].byteLength).toBeLessThanOrEqual(binLen);
    expect(json.buffers[0].uri).toBeUndefined();
    // every byte of BIN outside all views is zero
    const covered = new Uint8Array(binLen);
    for (const v of json.bufferViews) covered.fill(1, v.byteOffset ?? 0, (v.byteOffset ?? 0) + v.byteLength);
    const bin = b.subarray(binAt + 8, binAt + 8 + binLen);
    for (let i = 0; i < binLen; i++) if (!covered[i]) expect(bin[i], `byte ${i}`).toBe(0);
    for (const v of json.bufferViews) expect((v.byteOffset ?? 0) % 4).toBe(0);
  });

  it('gltf output: copies external images to the same relative URI; GLB output embeds them', async () => {
    const input = await readGltf(await writeRich(dir(), 'gltf'));
    expect(input.externalImages).toHaveLength(1);
    const d = dir();
    const files = encodeGltf(input, new Map(), { format: 'gltf', outPath: path.join(d, 'scene.gltf') });
    const names = files.map((f) => path.relative(d, f.path));
    expect(names[1]).toMatch(/^scene\.[0-9a-f]{16}\.bin$/); // the buffer is named by its content
    expect([names[0], names[2]]).toEqual(['scene.gltf', path.join('tex', 'normal map.png')]);
    await writeFilesAtomic(files);
    expect(Buffer.from(await readFile(path.join(d, 'tex', 'normal map.png'))).equals(Buffer.from(PNG))).toBe(true);
    await expectValid(path.join(d, 'scene.gltf'));

    const g = await encodeTo(input, new Map(), 'glb');
    const back = await readGltf(g);
    expect(back.json.images[0].uri).toBeUndefined();
    expect(back.json.images[0].mimeType).toBe('image/png');
    const view = back.json.bufferViews[back.json.images[0].bufferView];
    expect(Buffer.from(back.buffers[0].subarray(view.byteOffset, view.byteOffset + view.byteLength)).equals(Buffer.from(PNG))).toBe(true);
    expect(existsSync(path.join(path.dirname(g), 'tex'))).toBe(false);
    await expectValid(g);
  });

  it('keeps the URI of a missing image and writes no file for it', async () => {
    const d = dir();
    const { json, bin } = richAsset();
    const file = await writeGltf(d, 'rich', json, bin); // the PNG is not written
    const input = await readGltf(file);
    expect(input.warnings).toEqual(["image 'tex/normal%20map.png' not found; its URI is kept"]);
    for (const format of ['gltf', 'glb'] as const) {
      const files = encodeGltf(input, new Map(), { format, outPath: path.join(d, 'out', `x.${format}`) });
      expect(files.some((f) => f.path.endsWith('.png'))).toBe(false);
      await writeFilesAtomic(files);
      const back = await readGltf(path.join(d, 'out', `x.${format}`));
      expect(back.json.images[0].uri).toBe('tex/normal%20map.png');
    }
  });

  it('keeps data: URI images as they are', async () => {
    const { json, bin } = richAsset();
    const uri = `data:image/png;base64,${Buffer.from(PNG).toString('base64')}`;
    json.images[0] = { uri };
    const input = await readGltf(await writeGltf(dir(), 'd', json, bin, true));
    expect(input.externalImages).toEqual([]);
    for (const format of ['gltf', 'glb'] as const) {
      const out = await encodeTo(input, new Map(), format);
      expect((await readGltf(out)).json.images[0]).toEqual({ uri });
      await expectValid(out);
    }
  });
});

describe('encodeGltf keeps POSITION min/max correct', () => {
  it('corrects a kept POSITION (base and morph target) whose declared min/max is wrong; validator clean', async () => {
    const b = new GltfBuilder();
    b.addPrimitive({
      attributes: { POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' } },
      indices: IDX,
      targets: [{ POSITION: { array: new Float32Array([0, 0, 0.5, 0, 0, 0, 0, 0, 0, 0, 0, -0.25]), type: 'VEC3' } }],
    });
    const { json, bin } = b.build();
    const prim = json.meshes[0].primitives[0];
    json.accessors[prim.attributes.POSITION].min = [0, 0, 0];
    json.accessors[prim.attributes.POSITION].max = [5, 5, 5];
    json.accessors[prim.targets[0].POSITION].max = [0, 0, 0.4];
    const input = await readGltf(await writeGlb(dir(), 'wrong', json, bin));
    const out = await encodeTo(input, new Map(), 'glb');
    const back = await readGltf(out);
    const bp = back.json.meshes[0].primitives[0];
    // Source: glTF 2.0 specification 3.6.2.5: min/max are the per-component extremes of the data.
    expect(back.json.accessors[bp.attributes.POSITION].min).toEqual([0, 0, 0]);
    expect(back.json.accessors[bp.attributes.POSITION].max).toEqual([1, 1, 0]);
    expect(back.json.accessors[bp.targets[0].POSITION].min).toEqual([0, 0, -0.25]);
    expect(back.json.accessors[bp.targets[0].POSITION].max).toEqual([0, 0, 0.5]);
    await expectValid(out);
  });

  it('keeps a correct declared min/max as written, even when it is not the float32 value itself', async () => {
    const pos = new Float32Array([0, 0, 0, 0.3, 0, 0, 0.3, 0.3, 0, 0, 0.3, 0]);
    const b = new GltfBuilder();
    b.addPrimitive({ attributes: { POSITION: { array: pos, type: 'VEC3' } }, indices: IDX });
    const { json, bin } = b.build();
    const acc = json.accessors[json.meshes[0].primitives[0].attributes.POSITION];
    acc.max = [0.3, 0.3, 0];
    const input = await readGltf(await writeGlb(dir(), 'exact', json, bin));
    const back = await readGltf(await encodeTo(input, new Map(), 'glb'));
    // 0.3 rounds to the stored float32 value, so it is correct and stays 0.3 (not 0.30000001192092896).
    expect(back.json.accessors[back.json.meshes[0].primitives[0].attributes.POSITION].max).toEqual([0.3, 0.3, 0]);
  });
});
