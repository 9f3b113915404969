// Primitives that share accessors are baked once and share the written accessors; when they
// need different frames (another UV set, another texture transform) each gets its own.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readGltf } from '../../src/io/gltfRead.js';
import type { Asset } from '../../src/mesh/asset.js';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, writeGlb } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

let root = '';
let n = 0;
beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-shared-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane with two UV sets:
//   3 ---- 2     TEXCOORD_0 = (x, 1 - y): frame t = +x, w = +1
//   |    / |     TEXCOORD_1 = (y, x):     frame t = +y, w = +1
//   |  /   |     (glTF: the bitangent points toward decreasing v)
//   0 ---- 1
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV0 = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
const UV1 = new Float32Array([0, 0, 0, 1, 1, 1, 1, 0]);
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);

/** One mesh whose primitives all use the same accessors, one primitive per material. */
async function sharedFile(materials: any[]): Promise<string> {
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: {
      POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' },
      TEXCOORD_0: { array: UV0, type: 'VEC2' }, TEXCOORD_1: { array: UV1, type: 'VEC2' },
    },
    indices: IDX,
    material: 0,
  });
  const first = b.json.meshes[0].primitives[0];
  for (let m = 1; m < materials.length; m++) b.json.meshes[0].primitives.push({ ...structuredClone(first), material: m });
  const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
  b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
  b.json.textures = [{ source: 0 }];
  b.json.materials = materials;
  const { json, bin } = b.build({ extensionsUsed: ['KHR_texture_transform'] });
  return writeGlb(path.join(root, `case${n++}`), 'shared', json, bin);
}

async function bake(file: string): Promise<{ asset: Asset; out: string; report: any }> {
  const out = path.join(path.dirname(file), 'out.glb');
  const rep = path.join(path.dirname(file), 'report.json');
  const r = await runCli(['bake', file, '-o', out, '--report', rep], path.dirname(file));
  expect(r.stderr).toBe('');
  const { readFile } = await import('node:fs/promises');
  return { asset: await readGltf(out), out, report: JSON.parse(await readFile(rep, 'utf8')) };
}

function frame(a: Asset, prim: number): number[] {
  return Array.from(a.primitives[prim].attributes.TANGENT.array.subarray(0, 4), (x) => Math.round(x * 1e6) / 1e6 + 0);
}

describe('accessors shared between primitives', () => {
  it('two primitives with the same accessors and material needs are baked once and share every written accessor', async () => {
    const { asset, out, report } = await bake(await sharedFile([{ normalTexture: { index: 0 } }, { normalTexture: { index: 0 }, name: 'other' }]));
    const [a, b] = asset.json.meshes[0].primitives;
    expect(b.attributes).toEqual(a.attributes);
    expect(b.indices).toBe(a.indices);
    expect(Object.keys(a.attributes).sort()).toEqual(['NORMAL', 'POSITION', 'TANGENT', 'TEXCOORD_0', 'TEXCOORD_1']);
    // Five attributes and one index list: nothing written twice.
    expect(asset.json.accessors).toHaveLength(6);
    expect(report.files[0].primitives.map((p: any) => [p.primitive, p.material, p.action])).toEqual([[0, 0, 'baked'], [1, 1, 'baked']]);
    // Source: Khronos gltf-validator.
    expect((await validateGltfFile(out)).errors).toBe(0);
  });

  it('the same vertices under materials reading different UV sets get separate, correct frames', async () => {
    const { asset, out } = await bake(await sharedFile([{ normalTexture: { index: 0, texCoord: 0 } }, { normalTexture: { index: 0, texCoord: 1 } }]));
    const [a, b] = asset.json.meshes[0].primitives;
    expect(a.attributes.TANGENT).not.toBe(b.attributes.TANGENT);
    // Source: differential geometry of the quad's two parametrisations (see the sketch above).
    expect(frame(asset, 0)).toEqual([1, 0, 0, 1]);
    expect(frame(asset, 1)).toEqual([0, 1, 0, 1]);
    // Untouched data is still identical per corner in both.
    expect(asset.primitives[1].attributes.TEXCOORD_0.array).toEqual(UV0);
    expect((await validateGltfFile(out)).errors).toBe(0);
  });

  it('the same vertices and UV set under a rotated normal texture get their own frames', async () => {
    const { asset } = await bake(await sharedFile([
      { normalTexture: { index: 0 } },
      { normalTexture: { index: 0, extensions: { KHR_texture_transform: { rotation: Math.PI / 2 } } } },
    ]));
    expect(frame(asset, 0)).toEqual([1, 0, 0, 1]);
    // Source: KHR_texture_transform, u' = v = 1 - y: the tangent is -y.
    expect(frame(asset, 1)).toEqual([0, -1, 0, 1]);
  });

  it('a shared primitive that is not normal-mapped keeps the original accessors while its twin is baked', async () => {
    const { asset, out } = await bake(await sharedFile([{ normalTexture: { index: 0 } }, { name: 'plain' }]));
    const [a, b] = asset.json.meshes[0].primitives;
    expect(a.attributes.TANGENT).toBeDefined();
    expect(b.attributes.TANGENT).toBeUndefined();
    expect(b.attributes.POSITION).not.toBe(a.attributes.POSITION);
    expect(asset.primitives[1].attributes.POSITION.array).toEqual(POS);
    expect((await validateGltfFile(out)).errors).toBe(0);
  });
});

// Two quads packed into one shared vertex buffer of 8 vertices (exporters that pack a scene
// into one buffer write this); primitive A indexes vertices 0..3, primitive B 4..7, and a
// third primitive C repeats A's index accessor:
//   3 -- 2   7 -- 6
//   |  / |   |  / |      B lies at x + 2, z = 1
//   0 -- 1   4 -- 5
describe('primitives over slices of one shared vertex buffer', () => {
  async function packedFile(): Promise<string> {
    const b = new GltfBuilder();
    const pos = new Float32Array([...POS, ...Array.from(POS, (v, i) => (i % 3 === 0 ? v + 2 : i % 3 === 2 ? 1 : v))]);
    const nrm = new Float32Array([...NRM, ...NRM]);
    const uv = new Float32Array([...UV0, ...UV0]);
    b.addPrimitive({
      attributes: { POSITION: { array: pos, type: 'VEC3' }, NORMAL: { array: nrm, type: 'VEC3' }, TEXCOORD_0: { array: uv, type: 'VEC2' } },
      indices: IDX,
      material: 0,
    });
    const first = b.json.meshes[0].primitives[0];
    const idxB = b.addAccessorObject({ ...b.json.accessors[first.indices] });
    const view = b.addView(new Uint8Array(new Uint16Array(Array.from(IDX, (i) => i + 4)).buffer));
    b.json.accessors[idxB].bufferView = view;
    b.json.accessors[idxB].byteOffset = 0;
    b.json.meshes[0].primitives.push({ ...structuredClone(first), indices: idxB }, structuredClone(first));
    const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
    b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
    b.json.textures = [{ source: 0 }];
    b.json.materials = [{ normalTexture: { index: 0 } }];
    const { json, bin } = b.build();
    return writeGlb(path.join(root, `case${n++}`), 'packed', json, bin);
  }

  it('each primitive is baked over the vertices it references, in their order; one sharing the index range shares the solve', async () => {
    const { asset, out, report } = await bake(await packedFile());
    const [a, b, c] = asset.json.meshes[0].primitives;
    // Each output holds its own 4 vertices, not the 8 of the shared buffer.
    expect(asset.primitives[0].attributes.POSITION.array).toEqual(POS);
    expect(Array.from(asset.primitives[1].attributes.POSITION.array.subarray(0, 3))).toEqual([2, 0, 1]);
    expect(asset.primitives[1].attributes.POSITION.array.length).toBe(12);
    expect(Array.from(asset.primitives[1].indices!)).toEqual(Array.from(IDX));
    expect(report.files[0].primitives.map((p: any) => p.verticesIn)).toEqual([4, 4, 4]);
    // A and C name the same accessors: one solve, shared written accessors; B has its own.
    expect(c.attributes).toEqual(a.attributes);
    expect(c.indices).toBe(a.indices);
    expect(b.attributes.POSITION).not.toBe(a.attributes.POSITION);
    expect(frame(asset, 1)).toEqual([1, 0, 0, 1]);
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors).toBe(0);
  });
});
