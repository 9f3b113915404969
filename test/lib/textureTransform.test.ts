// A normal texture sampled through KHR_texture_transform: rotation and negative scale change
// the frames; offsets and positive scales do not; the written TEXCOORD stays as it was.
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
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-texxform-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A unit quad in the z = 0 plane, uv = (x, 1 - y) (glTF v grows downward, so the
// untransformed frame is t = +x, bitangent toward decreasing v = +y, w = +1):
//   3 ---- 2
//   |    / |
//   |  /   |
//   0 ---- 1
const POS = new Float32Array([0, 0, 0, 1, 0, 0, 1, 1, 0, 0, 1, 0]);
const NRM = new Float32Array([0, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 1]);
const UV = new Float32Array([0, 1, 1, 1, 1, 0, 0, 0]);
const IDX = new Uint16Array([0, 1, 2, 0, 2, 3]);

async function bakeWith(transform: any, extraArgs: string[] = []): Promise<{ out: Asset; file: string }> {
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: { POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' }, TEXCOORD_0: { array: UV, type: 'VEC2' } },
    indices: IDX,
    material: 0,
  });
  const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
  b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
  b.json.textures = [{ source: 0 }];
  b.json.materials[0].normalTexture = { index: 0, ...(transform ? { extensions: { KHR_texture_transform: transform } } : {}) };
  const { json, bin } = b.build(transform ? { extensionsUsed: ['KHR_texture_transform'] } : {});
  const dir = path.join(root, `case${n++}`);
  const input = await writeGlb(dir, 'quad', json, bin);
  const file = path.join(dir, 'out.glb');
  const r = await runCli(['bake', input, '-o', file, ...extraArgs], dir);
  expect(r.stderr).toBe('');
  return { out: await readGltf(file), file };
}

/** The distinct TANGENT values of the quad (all four vertices share one frame). */
function frameOf(a: Asset): number[] {
  const t = a.primitives[0].attributes.TANGENT.array;
  const first = Array.from(t.subarray(0, 4), (x) => Math.round(x * 1e6) / 1e6 + 0);
  for (let v = 1; v < t.length / 4; v++) expect(Array.from(t.subarray(4 * v, 4 * v + 4), (x) => Math.round(x * 1e6) / 1e6 + 0)).toEqual(first);
  return first;
}

describe('KHR_texture_transform on the normal texture', () => {
  it('no transform: t = +x, w = +1', async () => {
    // Source: METHODS.md worked check read as glTF coordinates, and differential geometry: dP/du = +x.
    expect(frameOf((await bakeWith(null)).out)).toEqual([1, 0, 0, 1]);
  });

  it('a quarter-turn rotation turns the tangent to -y (the direction of increasing u\')', async () => {
    // Source: KHR_texture_transform: u' = cos(r) u + sin(r) v; with r = pi/2, u' = v = 1 - y, so
    // dP/du' = -y; v' = -u = -x, the bitangent toward decreasing v' is +x = cross(N, -y), w = +1.
    const { out, file } = await bakeWith({ rotation: Math.PI / 2 });
    expect(frameOf(out)).toEqual([0, -1, 0, 1]);
    // The written texture coordinates are the original ones.
    expect(out.primitives[0].attributes.TEXCOORD_0.array).toEqual(UV);
    expect(out.json.materials[0].normalTexture.extensions.KHR_texture_transform.rotation).toBe(Math.PI / 2);
    // Source: Khronos gltf-validator.
    expect((await validateGltfFile(file)).errors).toBe(0);
  });

  it('a negative u scale mirrors the map: t = -x, w = -1', async () => {
    // Source: u' = -u, so dP/du' = -x; the bitangent stays +y = -cross(N, -x), so w = -1.
    expect(frameOf((await bakeWith({ scale: [-1, 1], offset: [1, 0] })).out)).toEqual([-1, 0, 0, -1]);
  });

  it('an offset and a positive non-uniform scale leave the frames as they are', async () => {
    expect(frameOf((await bakeWith({ offset: [0.25, 0.5], scale: [3, 0.5] })).out)).toEqual([1, 0, 0, 1]);
  });

  it('--uv naming another set than the normal texture\'s ignores that texture\'s transform', async () => {
    // The transform belongs to TEXCOORD_0 sampling; frames asked for TEXCOORD_1 (equal data
    // here) come from its untransformed values.
    const b = new GltfBuilder();
    b.addPrimitive({
      attributes: {
        POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' },
        TEXCOORD_0: { array: UV, type: 'VEC2' }, TEXCOORD_1: { array: UV, type: 'VEC2' },
      },
      indices: IDX,
      material: 0,
    });
    const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
    b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
    b.json.textures = [{ source: 0 }];
    b.json.materials[0].normalTexture = { index: 0, extensions: { KHR_texture_transform: { rotation: Math.PI / 2 } } };
    const { json, bin } = b.build({ extensionsUsed: ['KHR_texture_transform'] });
    const dir = path.join(root, `case${n++}`);
    const input = await writeGlb(dir, 'quad', json, bin);
    await runCli(['bake', input, '-o', path.join(dir, 'uv1.glb'), '--uv', '1'], dir);
    await runCli(['bake', input, '-o', path.join(dir, 'uv0.glb'), '--uv', '0'], dir);
    expect(frameOf(await readGltf(path.join(dir, 'uv1.glb')))).toEqual([1, 0, 0, 1]);
    expect(frameOf(await readGltf(path.join(dir, 'uv0.glb')))).toEqual([0, -1, 0, 1]);
  });

  it('the KHR_texture_transform texCoord override selects the set the frames come from', async () => {
    const b = new GltfBuilder();
    // TEXCOORD_1 = (y, x): u grows along +y, so its frame is t = +y; decreasing v is -x = cross(N, +y), w = +1.
    const uv1 = new Float32Array([0, 0, 0, 1, 1, 1, 1, 0]);
    b.addPrimitive({
      attributes: {
        POSITION: { array: POS, type: 'VEC3' }, NORMAL: { array: NRM, type: 'VEC3' },
        TEXCOORD_0: { array: UV, type: 'VEC2' }, TEXCOORD_1: { array: uv1, type: 'VEC2' },
      },
      indices: IDX,
      material: 0,
    });
    const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
    b.json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
    b.json.textures = [{ source: 0 }];
    b.json.materials[0].normalTexture = { index: 0, texCoord: 0, extensions: { KHR_texture_transform: { texCoord: 1 } } };
    const { json, bin } = b.build({ extensionsUsed: ['KHR_texture_transform'] });
    const dir = path.join(root, `case${n++}`);
    const input = await writeGlb(dir, 'quad', json, bin);
    await runCli(['bake', input, '-o', path.join(dir, 'out.glb')], dir);
    // Source: KHR_texture_transform: texCoord "overrides the textureInfo texCoord value".
    expect(frameOf(await readGltf(path.join(dir, 'out.glb')))).toEqual([0, 1, 0, 1]);
  });
});
