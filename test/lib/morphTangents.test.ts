// Morph targets that move normals get TANGENT deltas computed from the morphed shapes.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { readGltf } from '../../src/io/gltfRead.js';
import { toFloat32 } from '../../src/mesh/decode.js';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, writeGlb } from '../helpers/gltfBuilder.js';
import { encodePngRgba8 } from '../helpers/png.js';
import { validateGltfFile } from '../helpers/validate.js';

let root = '';
beforeAll(async () => {
  root = await mkdtemp(path.join(tmpdir(), 'tanframe-morph-'));
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

// A flat N x N grid on [0,1]^2 in the z = 0 plane that morphs into a Gaussian bump:
//   base  P = (x, y, 0),        N = (0, 0, 1),   uv = (x, 1 - y)  (glTF v grows downward)
//   bump  P = (x, y, h(x, y)),  N = normalize(-h_x, -h_y, 1),  h = A exp(-r^2 / s^2)
// Each grid cell is split into two triangles along the same diagonal:
//   (i,j+1) ---- (i+1,j+1)
//      |       /     |
//      |     /       |
//   (i,j) ------ (i+1,j)
const N = 33;
const A = 0.3;
const S = 0.25;
const h = (x: number, y: number) => A * Math.exp(-((x - 0.5) ** 2 + (y - 0.5) ** 2) / (S * S));
const hx = (x: number, y: number) => (-2 * (x - 0.5) / (S * S)) * h(x, y);
const hy = (x: number, y: number) => (-2 * (y - 0.5) / (S * S)) * h(x, y);

function grid() {
  const count = N * N;
  const positions = new Float32Array(count * 3);
  const normals = new Float32Array(count * 3);
  const uvs = new Float32Array(count * 2);
  const dPos = new Float32Array(count * 3);
  const dNrm = new Float32Array(count * 3);
  const dPosOnly = new Float32Array(count * 3);
  const staleTangent = new Float32Array(count * 3);
  for (let j = 0; j < N; j++) {
    for (let i = 0; i < N; i++) {
      const v = j * N + i;
      const x = i / (N - 1), y = j / (N - 1);
      positions.set([x, y, 0], v * 3);
      normals.set([0, 0, 1], v * 3);
      uvs.set([x, 1 - y], v * 2);
      dPos[v * 3 + 2] = h(x, y);
      const nx = -hx(x, y), ny = -hy(x, y), l = Math.hypot(nx, ny, 1);
      dNrm.set([nx / l, ny / l, 1 / l - 1], v * 3);
      dPosOnly[v * 3] = 0.1 * y;
      staleTangent.set([0.5, 0.5, 0.5], v * 3);
    }
  }
  const idx: number[] = [];
  for (let j = 0; j + 1 < N; j++) {
    for (let i = 0; i + 1 < N; i++) {
      const a = j * N + i, b = a + 1, c = a + N + 1, d = a + N;
      idx.push(a, b, c, a, c, d);
    }
  }
  return { positions, normals, uvs, dPos, dNrm, dPosOnly, staleTangent, indices: Uint16Array.from(idx) };
}

async function writeMorphingGrid(dir: string, copiesOfBump = 0): Promise<{ file: string; g: ReturnType<typeof grid> }> {
  const g = grid();
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: {
      POSITION: { array: g.positions, type: 'VEC3' },
      NORMAL: { array: g.normals, type: 'VEC3' },
      TEXCOORD_0: { array: g.uvs, type: 'VEC2' },
    },
    indices: g.indices,
    material: 0,
    targets: [
      { POSITION: { array: g.dPos, type: 'VEC3' }, NORMAL: { array: g.dNrm, type: 'VEC3' } },
      { POSITION: { array: g.dPosOnly, type: 'VEC3' } },
      { POSITION: { array: g.dPosOnly, type: 'VEC3' }, TANGENT: { array: g.staleTangent, type: 'VEC3' } },
    ],
  });
  const json = b.json;
  json.meshes[0].weights = [0, 0, 0];
  json.meshes[0].extras = { targetNames: ['bump', 'shear', 'shear with a stale tangent'] };
  // Further targets naming the bump's own accessors (exporters write one per animation clip).
  const prim = json.meshes[0].primitives[0];
  for (let i = 0; i < copiesOfBump; i++) {
    prim.targets.push({ ...prim.targets[0] });
    json.meshes[0].weights.push(0);
    json.meshes[0].extras.targetNames.push(`bump ${i + 2}`);
  }
  const png = encodePngRgba8(1, 1, new Uint8Array([128, 128, 255, 255]));
  json.images = [{ uri: `data:image/png;base64,${Buffer.from(png).toString('base64')}` }];
  json.textures = [{ source: 0 }];
  json.materials[0].normalTexture = { index: 0 };
  const { json: j, bin } = b.build();
  return { file: await writeGlb(dir, 'bump', j, bin), g };
}

describe('morph target TANGENT deltas', () => {
  it('a plane morphing into a bump: base + delta equals the frames solved directly on the morphed shape (1e-4)', async () => {
    const dir = path.join(root, 'bump');
    const { file, g } = await writeMorphingGrid(dir);
    const out = path.join(dir, 'out.glb');
    const r = await runCli(['bake', file, '-o', out], dir);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const baked = await readGltf(out);
    const p = baked.primitives[0];
    const base = toFloat32(p.attributes.TANGENT);
    const delta = p.targets[0].TANGENT;
    // glTF 2.0 3.7.2.2: morph-target TANGENT displacements are VEC3.
    expect(delta.type).toBe('VEC3');
    expect(delta.componentType).toBe(5126);
    const d = delta.array as Float32Array;

    // Source: the same method (mikktspace, glTF top-left UVs) run directly on the fully morphed shape.
    const count = N * N;
    const mp = new Float32Array(count * 3);
    const mn = new Float32Array(count * 3);
    for (let i = 0; i < count * 3; i++) mp[i] = g.positions[i] + g.dPos[i];
    for (let v = 0; v < count; v++) {
      const x = g.normals[3 * v] + g.dNrm[3 * v], y = g.normals[3 * v + 1] + g.dNrm[3 * v + 1], z = g.normals[3 * v + 2] + g.dNrm[3 * v + 2];
      const l = Math.hypot(x, y, z);
      mn.set([x / l, y / l, z / l], 3 * v);
    }
    const direct = computeFrames({ positions: mp, normals: mn, uvs: g.uvs, indices: Uint32Array.from(g.indices) }, { method: 'mikktspace', uvOrigin: 'top-left' });
    const outIdx = p.indices!;
    expect(outIdx.length).toBe(direct.indices.length);
    let worst = 0;
    let worstAnalyticDeg = 0;
    for (let c = 0; c < outIdx.length; c++) {
      const o = outIdx[c];
      const m = direct.indices[c];
      for (let k = 0; k < 3; k++) worst = Math.max(worst, Math.abs(base[4 * o + k] + d[3 * o + k] - direct.tangents[4 * m + k]));
      expect(base[4 * o + 3]).toBe(direct.tangents[4 * m + 3]);
      // Source: analytic surface, differential geometry: the exact tangent is dP/du = (1, 0, h_x)
      // made orthogonal to the exact normal; checked at interior vertices (boundary one-sided).
      const src = p.attributes.POSITION.array as Float32Array;
      const px = src[3 * o], py = src[3 * o + 1];
      if (px > 0.05 && px < 0.95 && py > 0.05 && py < 0.95) {
        const nx = -hx(px, py), ny = -hy(px, py), nl = Math.hypot(nx, ny, 1);
        const n = [nx / nl, ny / nl, 1 / nl];
        const du = [1, 0, hx(px, py)];
        const dot = du[0] * n[0] + du[1] * n[1] + du[2] * n[2];
        const t = [du[0] - dot * n[0], du[1] - dot * n[1], du[2] - dot * n[2]];
        const tl = Math.hypot(t[0], t[1], t[2]);
        const got = [base[4 * o] + d[3 * o], base[4 * o + 1] + d[3 * o + 1], base[4 * o + 2] + d[3 * o + 2]];
        const gl = Math.hypot(got[0], got[1], got[2]);
        const cos = (got[0] * t[0] + got[1] * t[1] + got[2] * t[2]) / (gl * tl);
        worstAnalyticDeg = Math.max(worstAnalyticDeg, (Math.acos(Math.min(1, cos)) * 180) / Math.PI);
      }
    }
    console.log(`morph TANGENT delta: max |base + delta - direct| = ${worst.toExponential(2)}; max angle to the analytic bump tangent ${worstAnalyticDeg.toFixed(3)} deg (N = ${N})`);
    expect(worst).toBeLessThan(1e-4);
    // A 33 x 33 grid resolves the bump (height 0.3, width 0.25) to well within a degree.
    expect(worstAnalyticDeg).toBeLessThan(1);
  });

  it('targets without NORMAL deltas get no TANGENT delta, and a stale one is dropped; the file validates', async () => {
    const dir = path.join(root, 'targets');
    const { file } = await writeMorphingGrid(dir);
    const out = path.join(dir, 'out.glb');
    expect((await runCli(['bake', file, '-o', out], dir)).code).toBe(0);
    const baked = await readGltf(out);
    const targets = baked.json.meshes[0].primitives[0].targets;
    expect(Object.keys(targets[0]).sort()).toEqual(['NORMAL', 'POSITION', 'TANGENT']);
    expect(Object.keys(targets[1])).toEqual(['POSITION']);
    expect(Object.keys(targets[2])).toEqual(['POSITION']);
    expect(baked.json.meshes[0].weights).toEqual([0, 0, 0]);
    expect(baked.json.meshes[0].extras.targetNames).toHaveLength(3);
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors, v.messages.join('\n')).toBe(0);
  });

  it('targets naming the same accessors are solved once and share their written accessors', async () => {
    const dir = path.join(root, 'copies');
    const { file } = await writeMorphingGrid(dir, 3);
    const single = path.join(dir, 'single');
    const { file: one } = await writeMorphingGrid(single);
    const out = path.join(dir, 'out.glb');
    const outOne = path.join(single, 'out.glb');
    expect((await runCli(['bake', file, '-o', out], dir)).code).toBe(0);
    expect((await runCli(['bake', one, '-o', outOne], single)).code).toBe(0);
    const baked = await readGltf(out);
    const targets = baked.json.meshes[0].primitives[0].targets;
    expect(targets).toHaveLength(6);
    for (const t of targets.slice(3)) expect(t).toEqual(targets[0]);
    // As many accessors as the file with the bump target alone: the copies add none.
    expect(baked.json.accessors).toHaveLength((await readGltf(outOne)).json.accessors.length);
    expect(Array.from(baked.primitives[0].targets[5].TANGENT.array)).toEqual(Array.from(baked.primitives[0].targets[0].TANGENT.array));
    // Source: Khronos gltf-validator.
    const v = await validateGltfFile(out);
    expect(v.errors, v.messages.join('\n')).toBe(0);
  });

  it('targets are split with the base: a mirror seam duplicates target deltas with their vertex', async () => {
    // Two quads sharing the edge 1-4, UVs mirrored across it (u runs 0->1->0):
    //   3 ---- 4 ---- 5
    //   |    / |    / |
    //   |  /   |  /   |
    //   0 ---- 1 ---- 2
    const positions = new Float32Array([0, 0, 0, 1, 0, 0, 2, 0, 0, 0, 1, 0, 1, 1, 0, 2, 1, 0]);
    const normals = new Float32Array(18).fill(0).map((_, i) => (i % 3 === 2 ? 1 : 0));
    const uvs = new Float32Array([0, 1, 1, 1, 0, 1, 0, 0, 1, 0, 0, 0]);
    const dPos = new Float32Array([0, 0, 0, 0, 0, 0.5, 0, 0, 0, 0, 0, 0, 0, 0, 0.5, 0, 0, 0]);
    const dNrm = new Float32Array(18);
    const b = new GltfBuilder();
    b.addPrimitive({
      attributes: { POSITION: { array: positions, type: 'VEC3' }, NORMAL: { array: normals, type: 'VEC3' }, TEXCOORD_0: { array: uvs, type: 'VEC2' } },
      indices: new Uint16Array([0, 1, 4, 0, 4, 3, 1, 2, 5, 1, 5, 4]),
      targets: [{ POSITION: { array: dPos, type: 'VEC3' }, NORMAL: { array: dNrm, type: 'VEC3' } }],
    });
    const { json, bin } = b.build();
    const dir = path.join(root, 'seam');
    const file = await writeGlb(dir, 'seam', json, bin);
    const out = path.join(dir, 'out.glb');
    expect((await runCli(['bake', file, '-o', out, '--all-primitives'], dir)).code).toBe(0);
    const p = (await readGltf(out)).primitives[0];
    const count = p.attributes.POSITION.array.length / 3;
    // Vertices 1 and 4 sit on the mirror line: each splits in two (6 -> 8 vertices).
    expect(count).toBe(8);
    const pos = p.attributes.POSITION.array;
    const dp = p.targets[0].POSITION.array;
    for (let v = 0; v < count; v++) expect(dp[3 * v + 2]).toBe(pos[3 * v] === 1 ? 0.5 : 0);
    expect(p.targets[0].TANGENT.array.length).toBe(count * 3);
  });
});
