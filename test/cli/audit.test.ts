// End-to-end runs of `tanframe audit` (and the exit statuses of `bake`) in-process, on generated
// grids with planted defects (test/helpers/gridAsset.ts), the bundled demo and a Khronos sample.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, writeGlb } from '../helpers/gltfBuilder.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb, type GridAsset } from '../helpers/gridAsset.js';
import { shardOf } from '../../src/cli/shared.js';

const repo = path.resolve(__dirname, '../..');
const demo = path.join(repo, 'examples/harbor-props');
let tmp = '';
let grids = '';
const N = 8; // 8 x 8 quads: 128 triangles, 384 vertices

/** The planted degenerate-UV triangles, one of each kind. */
const IDENTICAL = 5, COLINEAR = 37, COINCIDENT = 90;

function plantDegenerate(g: GridAsset): void {
  // identical: all three corners at corner 0's UV.
  const a = cornerUv(g, IDENTICAL, 0);
  setCornerUv(g, IDENTICAL, 1, a);
  setCornerUv(g, IDENTICAL, 2, a);
  // colinear: corner 2 moved to the middle of the edge from corner 0 to corner 1.
  const p = cornerUv(g, COLINEAR, 0), q = cornerUv(g, COLINEAR, 1);
  setCornerUv(g, COLINEAR, 2, [(p[0] + q[0]) / 2, (p[1] + q[1]) / 2]);
  // coincident: corner 1 on top of corner 0.
  setCornerUv(g, COINCIDENT, 1, cornerUv(g, COINCIDENT, 0));
}

/** Triangle 21 shrunk to half size about the centroid of triangle 20, inside it: one overlapping pair. */
function plantOverlap(g: GridAsset): void {
  const c = [0, 1, 2].map((k) => cornerUv(g, 20, k));
  const cu = (c[0][0] + c[1][0] + c[2][0]) / 3, cv = (c[0][1] + c[1][1] + c[2][1]) / 3;
  for (let k = 0; k < 3; k++) setCornerUv(g, 21, k, [cu + 0.5 * (c[k][0] - cu), cv + 0.5 * (c[k][1] - cv)]);
}

/**
 * A welded 4 x 4 grid whose right half mirrors the left in u (u = x/4 left of x = 2, 1 - x/4
 * right of it; v = 1 - y/4): the 5 vertices on the line x = 2 are shared by both sides.
 *   y ^
 *   4 +--+--+--+--+
 *     |  |  |  |  |     left half: u grows with x (w = +1); right half: u falls (w = -1)
 *   0 +--+--+--+--+--> x
 *     0     2     4
 */
async function writeMirroredGrid(dir: string): Promise<string> {
  const n = 4, side = n + 1;
  const positions = new Float32Array(side * side * 3), normals = new Float32Array(side * side * 3), uvs = new Float32Array(side * side * 2);
  for (let j = 0; j <= n; j++) {
    for (let i = 0; i <= n; i++) {
      const v = j * side + i;
      positions[v * 3] = i; positions[v * 3 + 1] = j; normals[v * 3 + 2] = 1;
      uvs[v * 2] = i <= n / 2 ? i / n : 1 - i / n;
      uvs[v * 2 + 1] = 1 - j / n;
    }
  }
  const indices: number[] = [];
  for (let j = 0; j < n; j++) {
    for (let i = 0; i < n; i++) {
      const a = j * side + i;
      indices.push(a, a + 1, a + side + 1, a, a + side + 1, a + side);
    }
  }
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: { POSITION: { array: positions, type: 'VEC3' }, NORMAL: { array: normals, type: 'VEC3' }, TEXCOORD_0: { array: uvs, type: 'VEC2' } },
    indices: Uint32Array.from(indices),
  });
  const { json, bin } = b.build();
  return writeGlb(dir, 'mirrored', json, bin);
}

beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-audit-'));
  grids = path.join(tmp, 'grids');
  await writeGridGlb(grids, 'clean', gridAsset(N));
  const degenerate = gridAsset(N);
  plantDegenerate(degenerate);
  await writeGridGlb(grids, 'degenerate-uv', degenerate);
  const overlap = gridAsset(N);
  plantOverlap(overlap);
  await writeGridGlb(grids, 'overlap', overlap);
  const nan = gridAsset(N);
  nan.positions[(40 * 3 + 1) * 3] = NaN; // x of corner 1 of triangle 40
  nan.normals[(70 * 3) * 3 + 2] = NaN; // z of the normal of corner 0 of triangle 70
  await writeGridGlb(grids, 'nan', nan);
  const flipped = gridAsset(N);
  for (let k = 0; k < 3; k++) flipped.normals[(44 * 3 + k) * 3 + 2] = -1; // triangle 44 faces away
  await writeGridGlb(grids, 'flipped-normals', flipped);
  await writeGridGlb(grids, 'tangents-exact', gridAsset(N, true));
  const wrong = gridAsset(N, true);
  const r = (30 * Math.PI) / 180;
  wrong.tangents![(10 * 3) * 4] = Math.cos(r); // corner 0 of triangle 10: rotated 30 degrees about the normal
  wrong.tangents![(10 * 3) * 4 + 1] = Math.sin(r);
  wrong.tangents![(50 * 3 + 1) * 4 + 3] = -1; // corner 1 of triangle 50: the other handedness
  await writeGridGlb(grids, 'tangents-wrong', wrong);
  // Triangle 10's three UVs collapsed to one point: its own vertices (no neighbour welds with
  // them) have no defined frame; the file stores (0, 1, 0), w = -1 there, as another
  // implementation's default could be.
  const undef = gridAsset(N, true);
  for (let k = 0; k < 3; k++) {
    setCornerUv(undef, 10, k, cornerUv(undef, 10, 0));
    undef.tangents!.set([0, 1, 0, -1], (10 * 3 + k) * 4);
  }
  await writeGridGlb(path.join(tmp, 'extra'), 'tangents-undefined', undef); // outside grids/ (batch tests count those)
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

async function audit(args: string[]): Promise<{ code: number; report: any; stderr: string }> {
  const r = await runCli(['audit', ...args, '--json'], tmp);
  return { code: r.code, report: JSON.parse(r.stdout), stderr: r.stderr };
}

const grid = (name: string) => path.join(grids, `${name}.glb`);

/**
 * Object-space centroid of grid triangle t, from the sketch in test/helpers/gridAsset.ts:
 * quad (i, j) = t >> 1; the even triangle (i, j) (i+1, j) (i+1, j+1) has its centroid at
 * (i + 2/3, j + 1/3), the odd one (i, j) (i+1, j+1) (i, j+1) at (i + 1/3, j + 2/3); z = 0.
 */
function gridCentroid(t: number): number[] {
  const q = t >> 1, i = q % N, j = (q - i) / N;
  return t % 2 === 0 ? [i + 2 / 3, j + 1 / 3, 0] : [i + 1 / 3, j + 2 / 3, 0];
}

/** Centroids as the report writes them (7 significant digits) match the grid's within 1e-6. */
function expectCentroids(got: (number[] | null)[], triangles: number[]): void {
  expect(got.length).toBe(triangles.length);
  got.forEach((c, k) => {
    const want = gridCentroid(triangles[k]);
    expect(c, `triangle ${triangles[k]}`).not.toBeNull();
    for (let a = 0; a < 3; a++) expect(Math.abs(c![a] - want[a]), `triangle ${triangles[k]} axis ${a}`).toBeLessThan(1e-6);
  });
}

function noOtherFindings(p: any, except: string[]): void {
  const all: Record<string, number> = {
    degenerateUv: p.degenerateUv.count, degenerateGeometry: p.degenerateGeometry.count, invalidValues: p.invalidValues.count,
    badNormals: p.badNormals.count, uvOverlap: p.uvOverlap.count, mirroredTriangles: p.mirroredTriangles,
  };
  for (const [k, v] of Object.entries(all)) if (!except.includes(k)) expect(v, k).toBe(0);
}

describe('audit says where each finding is', () => {
  it('givesAnObjFindingItsCentroidAndTheLineOfItsFace', async () => {
    // A quad (line 11, triangles 0 and 1) and, after a comment, a triangle whose three corners
    // share one vt (line 13, triangle 2): degenerate UVs, centroid ((1 + 2 + 1) / 3, 1 / 3, 0).
    //   4 (0,1) -- 3 (1,1)
    //   |          |  \
    //   1 (0,0) -- 2 (1,0) -- 5 (2,0)
    const dir = path.join(tmp, 'obj-lines');
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'plate.obj'), [
      'v 0 0 0', 'v 1 0 0', 'v 1 1 0', 'v 0 1 0', 'v 2 0 0', // 1-5
      'vt 0 0', 'vt 1 0', 'vt 1 1', 'vt 0 1', // 6-9
      'vn 0 0 1', // 10
      'f 1/1/1 2/2/1 3/3/1 4/4/1', // 11
      '# the sliver', // 12
      'f 2/2/1 5/2/1 3/2/1', // 13
    ].join('\n') + '\n');
    const r = await audit([path.join(dir, 'plate.obj')]);
    const p = r.report.files[0].primitives[0];
    expect(p.degenerateUv.triangles).toEqual([2]);
    expect(p.degenerateUv.lines).toEqual([13]);
    expect(p.degenerateUv.centroids[0][0]).toBeCloseTo(4 / 3, 6);
    expect(p.degenerateUv.centroids[0][1]).toBeCloseTo(1 / 3, 6);
    expect(p.degenerateUv.centroids[0][2]).toBe(0);
    // Every listed finding of an OBJ carries lines, empty ones included.
    expect(p.uvOverlap.lines).toEqual([]);
    expect(p.badNormals.lines).toEqual([]);
  });

  it('listsTheVerticesWhoseStoredTangentIsInvalid', async () => {
    // The exact grid frames, but corner 2 of triangle 9 (vertex 29) stores w = 0.5 (glTF 2.0,
    // 3.7.2.1: w must be +1 or -1). Quad 4 = (4, 0), odd triangle: corner 2 at (4, 1).
    const g = gridAsset(N, true);
    g.tangents![29 * 4 + 3] = 0.5;
    const file = await writeGridGlb(path.join(tmp, 'invalid-tangent'), 'invalid-tangent', g);
    const s = (await audit([file])).report.files[0].primitives[0].storedTangents;
    expect(s.invalid).toBe(1);
    expect(s.invalidVertices).toMatchObject({ count: 1, vertices: [29], positions: [[4, 1, 0]], triangleCount: 1, triangles: [9] });
    expectCentroids(s.invalidVertices.centroids, [9]);
  });

  it('numbersVerticesAsTheAccessorsDoWhenAPrimitiveUsesPartOfABuffer', async () => {
    // Eight vertices in the accessors; the primitive indexes only 4..7 (a quad at z = 0 facing
    // +z), and vertex 6's normal points to -z: away from both its faces (bad normal).
    //   7 (0,1) -- 6 (1,1)
    //   |       /  |
    //   4 (0,0) -- 5 (1,0)
    const positions = new Float32Array(8 * 3), normals = new Float32Array(8 * 3), uvs = new Float32Array(8 * 2);
    const corners = [[0, 0], [1, 0], [1, 1], [0, 1]];
    for (let v = 0; v < 8; v++) {
      const [x, y] = corners[v % 4];
      positions.set([x + (v < 4 ? 5 : 0), y, 0], v * 3);
      normals.set([0, 0, 1], v * 3);
      uvs.set([x, 1 - y], v * 2);
    }
    normals.set([0, 0, -1], 6 * 3);
    const b = new GltfBuilder();
    b.addPrimitive({
      attributes: { POSITION: { array: positions, type: 'VEC3' }, NORMAL: { array: normals, type: 'VEC3' }, TEXCOORD_0: { array: uvs, type: 'VEC2' } },
      indices: Uint32Array.from([4, 5, 6, 4, 6, 7]),
    });
    const { json, bin } = b.build();
    const file = await writeGlb(path.join(tmp, 'partial'), 'partial', json, bin);
    const r = await audit([file, '--all-primitives']);
    const p = r.report.files[0].primitives[0];
    expect(p.badNormals).toMatchObject({ count: 1, vertices: [6], positions: [[1, 1, 0]], triangleCount: 2, triangles: [0, 1] });
    // Centroids of (4, 5, 6) and (4, 6, 7).
    expect(p.badNormals.centroids).toEqual([[0.6666667, 0.3333333, 0], [0.3333333, 0.6666667, 0]]);
  });
});

describe('audit finds planted defects exactly', () => {
  it('degenerateUvTrianglesOfEachKindTripTheGateAndAreListed', async () => {
    const r = await audit([grid('degenerate-uv'), '--fail-on', 'degenerate-uv']);
    expect(r.code).toBe(1);
    const f = r.report.files[0];
    expect(f.gates).toEqual(['degenerate-uv']);
    const p = f.primitives[0];
    expect(p.action).toBe('baked');
    expect(p.triangles).toBe(2 * N * N);
    expect(p.degenerateUv).toMatchObject({ count: 3, triangles: [IDENTICAL, COLINEAR, COINCIDENT] });
    // Where they are: each listed triangle's centroid in object space; a GLB has no source lines.
    expectCentroids(p.degenerateUv.centroids, [IDENTICAL, COLINEAR, COINCIDENT]);
    expect(p.degenerateUv.lines).toBeUndefined();
    noOtherFindings(p, ['degenerateUv']);
    console.log(`planted degenerate UV triangles ${[IDENTICAL, COLINEAR, COINCIDENT].join(', ')}; audit lists ${p.degenerateUv.triangles.join(', ')}`);
  });

  it('theRepairedGridPasses', async () => {
    const r = await audit([grid('clean'), '--fail-on', 'degenerate-uv']);
    expect(r.code).toBe(0);
    expect(r.report.files[0].gates).toEqual([]);
    expect(r.report.files[0].primitives[0].degenerateUv).toEqual({ count: 0, triangles: [], centroids: [] });
    noOtherFindings(r.report.files[0].primitives[0], []);
  });

  it('maxDegenerateUvToleratesUpToItsCount', async () => {
    expect((await audit([grid('degenerate-uv'), '--fail-on', 'degenerate-uv', '--max-degenerate-uv', '3'])).code).toBe(0);
    expect((await audit([grid('degenerate-uv'), '--fail-on', 'degenerate-uv', '--max-degenerate-uv', '2'])).code).toBe(1);
  });

  it('uvEpsilonDecidesWhenASliverIsDegenerate', async () => {
    // Triangle 60's corner 2 pulled toward the edge from corner 0 to corner 1 until
    // |det| / (|e1|^2 + |e2|^2) is about 1e-5: above the default 1e-7, below 1e-4.
    const g = gridAsset(N);
    const a = cornerUv(g, 60, 0), b = cornerUv(g, 60, 1), c = cornerUv(g, 60, 2);
    const s = 2e-5;
    setCornerUv(g, 60, 2, [(a[0] + b[0]) / 2 + s * (c[0] - (a[0] + b[0]) / 2), (a[1] + b[1]) / 2 + s * (c[1] - (a[1] + b[1]) / 2)]);
    const file = await writeGridGlb(path.join(tmp, 'sliver'), 'sliver', g);
    const byDefault = await audit([file, '--fail-on', 'degenerate-uv']);
    expect(byDefault.code).toBe(0);
    expect(byDefault.report.files[0].primitives[0].degenerateUv.count).toBe(0);
    const strict = await audit([file, '--fail-on', 'degenerate-uv', '--uv-epsilon', '1e-4']);
    expect(strict.code).toBe(1);
    expect(strict.report.files[0].primitives[0].degenerateUv.triangles).toEqual([60]);
    expect(strict.report.options.uvEpsilon).toBe(1e-4);
  });

  it('overlappingUvTrianglesAreFoundExactly', async () => {
    const r = await audit([grid('overlap'), '--fail-on', 'uv-overlap']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].gates).toEqual(['uv-overlap']);
    const p = r.report.files[0].primitives[0];
    expect(p.uvOverlap).toMatchObject({ count: 2, triangles: [20, 21] });
    expectCentroids(p.uvOverlap.centroids, [20, 21]);
    noOtherFindings(p, ['uvOverlap']);
    expect((await audit([grid('clean'), '--fail-on', 'uv-overlap'])).code).toBe(0);
  });

  it('nanValuesAreCountedPerVertex', async () => {
    const r = await audit([grid('nan'), '--fail-on', 'invalid-values']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].gates).toEqual(['invalid-values']);
    const p = r.report.files[0].primitives[0];
    // One vertex with a NaN position, one with a NaN normal.
    expect(p.invalidValues.count).toBe(2);
    // The triangle holding the NaN position has no usable area (documented in findDegenerateGeometry);
    // the NaN normal is not unit (documented in findBadNormals).
    expect(p.degenerateGeometry).toMatchObject({ count: 1, triangles: [40] });
    expect(p.degenerateGeometry.centroids).toEqual([null]); // a NaN corner: no centroid
    expect(p.badNormals.count).toBe(1);
    // Where: vertex 121 (corner 1 of triangle 40, NaN x: no position) and vertex 210 (corner 0
    // of triangle 70, NaN normal, at grid corner (i, j) of quad 35 = (3, 4)); each vertex is
    // its own (no welding), so each lies in one triangle.
    expect(p.invalidValues).toMatchObject({ vertices: [121, 210], triangleCount: 2, triangles: [40, 70] });
    expect(p.invalidValues.positions).toEqual([null, [3, 4, 0]]);
    expect(p.invalidValues.centroids[0]).toBeNull();
    expectCentroids([p.invalidValues.centroids[1]], [70]);
    expect(p.badNormals).toMatchObject({ count: 1, vertices: [210], positions: [[3, 4, 0]], triangleCount: 1, triangles: [70] });
    expect(p.degenerateUv.count).toBe(0);
    expect((await audit([grid('clean'), '--fail-on', 'invalid-values'])).code).toBe(0);
  });

  it('flippedNormalsAreFoundExactly', async () => {
    const r = await audit([grid('flipped-normals'), '--fail-on', 'bad-normals']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].gates).toEqual(['bad-normals']);
    const p = r.report.files[0].primitives[0];
    expect(p.badNormals.count).toBe(3); // the three corners of triangle 44 (each its own vertex)
    // Quad 22 = (6, 2), even triangle: corners (6, 2) (7, 2) (7, 3).
    expect(p.badNormals).toMatchObject({ vertices: [132, 133, 134], positions: [[6, 2, 0], [7, 2, 0], [7, 3, 0]], triangleCount: 1, triangles: [44] });
    expectCentroids(p.badNormals.centroids, [44]);
    noOtherFindings(p, ['badNormals']);
    expect((await audit([grid('clean'), '--fail-on', 'bad-normals'])).code).toBe(0);
  });

  it('wrongStoredTangentsAreFoundExactly', async () => {
    const exact = await audit([grid('tangents-exact'), '--fail-on', 'tangent-mismatch']);
    expect(exact.code).toBe(0);
    const e = exact.report.files[0].primitives[0].storedTangents;
    expect(e.compared).toBe(3 * 2 * N * N);
    expect(e.mismatched).toBe(0);
    expect(e.signMismatch).toBe(0);
    expect(e.maxAngleDeg).toBeLessThan(1e-3);

    // 2 of 384 corners (0.52%) are off: within the default limit of 1%, beyond a limit of 0.
    const lenient = await audit([grid('tangents-wrong'), '--fail-on', 'tangent-mismatch']);
    expect(lenient.code).toBe(0);
    expect(lenient.report.files[0].gateFigures).toEqual([
      { gate: 'tangent-mismatch', count: 2, population: 384, of: 'corners', limit: '1%', tripped: false, invalid: 0, invalidOf: 384 },
    ]);
    const r = await audit([grid('tangents-wrong'), '--fail-on', 'tangent-mismatch', '--limit', 'tangent-mismatch=0']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].gates).toEqual(['tangent-mismatch']);
    const s = r.report.files[0].primitives[0].storedTangents;
    expect(s.invalid).toBe(0);
    expect(s.signMismatch).toBe(1);
    expect(s.mismatched).toBe(2);
    expect(s.maxAngleDeg).toBeCloseTo(30, 3);
    // Where: the triangles holding the two mismatched corners, with their centroids.
    expect(s.mismatchedTriangles).toMatchObject({ count: 2, triangles: [10, 50] });
    expectCentroids(s.mismatchedTriangles.centroids, [10, 50]);
    expect(s.invalidVertices).toMatchObject({ count: 0, vertices: [], triangles: [] });
  });

  it('cornersWithoutADefinedFrameAreCountedApartAndNotCompared', async () => {
    // Source: METHODS.md step 8: where no contributing triangle reaches a vertex, the method
    // defines no tangent; the comparison leaves those corners out and counts them apart.
    const file = path.join(tmp, 'extra', 'tangents-undefined.glb');
    const r = await audit([file, '--fail-on', 'tangent-mismatch']);
    expect(r.code).toBe(0);
    const p = r.report.files[0].primitives[0];
    expect(p.storedTangents).toMatchObject({
      invalid: 0, undefinedFrames: 3, meanAngleDeg: 0, p95AngleDeg: 0, maxAngleDeg: 0, signMismatch: 0,
      compared: 3 * 2 * N * N - 3, mismatched: 0,
      mismatchedTriangles: { count: 0, triangles: [], centroids: [] },
    });
    expect(p.fallbackTangents).toBeGreaterThan(0);
    const shown = await runCli(['audit', file, '--html', 'undefined.html'], tmp);
    expect(shown.code).toBe(0);
    expect(shown.stdout).toMatch(/mean 0\.000\u00b0 max 0\.00\u00b0, 3 undefined/);
    expect(fs.readFileSync(path.join(tmp, 'undefined.html'), 'utf8')).toContain('3 corners undefined (not compared)');
  });

  it('missingTangentsOnANormalMappedPrimitiveTripTheirGate', async () => {
    const r = await audit([grid('clean'), '--fail-on', 'missing-tangents']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].primitives[0].normalMapped).toBe(true);
    expect(r.report.files[0].primitives[0].storedTangents).toBeNull();
    expect((await audit([grid('tangents-exact'), '--fail-on', 'missing-tangents'])).code).toBe(0);
  });

  it('mirrorSeamSplitsCountTheVerticesSplitOnTheMirrorLine', async () => {
    // Source: MikkTSpace grouping (METHODS.md, item 4): a vertex on a UV mirror line gets one
    // frame per side, so each of the 5 shared vertices on x = 2 is split once, with the other w.
    const file = await writeMirroredGrid(path.join(tmp, 'mirror'));
    const r = await audit([file, '--all-primitives']);
    expect(r.code).toBe(0);
    const p = r.report.files[0].primitives[0];
    expect(p.mirroredTriangles).toBe(16);
    expect(p.splitVertices).toBe(5);
    expect(p.mirrorSeamSplits).toBe(5);
  });
});

const ntmt = path.resolve(repo, '../shared/datasets/gltf-samples/NormalTangentMirrorTest/glTF-Binary/NormalTangentMirrorTest.glb');
const ntmtPresent = fs.existsSync(ntmt);
if (!ntmtPresent) console.warn(`SKIPPED: ${ntmt} is absent (shared datasets not installed); the NormalTangentMirrorTest audit did not run`);

describe.skipIf(!ntmtPresent)('NormalTangentMirrorTest (Khronos sample, CC-BY 4.0)', () => {
  it('storedTangentsAuditAsMatchingTheStandardMethod', async () => {
    // Source: Khronos glTF sample asset NormalTangentMirrorTest; its tangents were exported with
    // the standard method (MikkTSpace), which glTF 2.0 names for generated tangents.
    const r = await audit([ntmt, '--fail-on', 'tangent-mismatch,invalid-values']);
    expect(r.code).toBe(0);
    const p = r.report.files[0].primitives[0];
    const s = p.storedTangents;
    console.log(
      `NormalTangentMirrorTest audit: ${s.compared} corners compared; mean ${s.meanAngleDeg.toFixed(5)} deg, ` +
        `p95 ${s.p95AngleDeg.toFixed(5)} deg, max ${s.maxAngleDeg.toFixed(5)} deg; ${s.signMismatch} sign mismatches; ` +
        `${p.mirroredTriangles} mirrored triangles`,
    );
    expect(s.compared).toBeGreaterThan(15000);
    expect(s.invalid).toBe(0);
    expect(s.signMismatch).toBe(0);
    expect(s.mismatched).toBe(0);
    expect(s.maxAngleDeg).toBeLessThanOrEqual(1); // the default --tolerance
    expect(p.mirroredTriangles).toBeGreaterThan(0); // the sample's point: mirrored UVs
  });
});

describe('batch', () => {
  const strip = (text: string) => JSON.stringify(JSON.parse(text), (k, v) => (k === 'seconds' ? undefined : v));

  it('theJsonReportIsTheSameForOneAndTwoWorkers', async () => {
    const args = ['audit', grids, demo, '--fail-on', 'degenerate-uv,uv-overlap', '--json'];
    const one = await runCli([...args, '--jobs', '1'], tmp);
    const two = await runCli([...args, '--jobs', '2'], tmp);
    expect(one.code).toBe(1);
    expect(two.code).toBe(1);
    const parsed = JSON.parse(two.stdout);
    expect(parsed.files.length).toBe(13); // 7 grids + 6 demo files
    expect(parsed.files.map((f: any) => f.input)).toEqual([...parsed.files.map((f: any) => f.input)].sort());
    expect(strip(two.stdout)).toBe(strip(one.stdout));
    // Timings are present (and only there).
    expect(typeof parsed.summary.seconds).toBe('number');
    expect(parsed.files.every((f: any) => typeof f.seconds === 'number')).toBe(true);
  });

  it('shardSlicesPartitionTheInputs', async () => {
    // The pure slicer: every position lands in exactly one slice.
    const items = Array.from({ length: 17 }, (_, i) => i);
    for (const n of [1, 2, 3, 5, 17, 20]) {
      const slices = Array.from({ length: n }, (_, k) => shardOf(items, { k: k + 1, n }));
      expect(slices.flat().sort((a, b) => a - b)).toEqual(items);
    }
    // Through the CLI, over 13 files in 3 slices.
    const whole = JSON.parse((await runCli(['audit', grids, demo, '--json', '--jobs', '1'], tmp)).stdout).files.map((f: any) => f.input);
    const seen: string[] = [];
    for (let k = 1; k <= 3; k++) {
      const r = await runCli(['audit', grids, demo, '--json', '--shard', `${k}/3`], tmp);
      expect(r.code).toBe(0);
      const inputs = JSON.parse(r.stdout).files.map((f: any) => f.input);
      expect(inputs.length).toBeGreaterThan(0);
      for (const i of inputs) expect(seen, `${i} in two slices`).not.toContain(i);
      seen.push(...inputs);
    }
    expect(seen.sort()).toEqual([...whole].sort());
    expect(whole.length).toBe(13);
  });

  it('aFileThatCannotBeReadFailsAloneWithExit3', async () => {
    const dir = path.join(tmp, 'mixed');
    fs.mkdirSync(dir, { recursive: true });
    fs.copyFileSync(grid('degenerate-uv'), path.join(dir, 'a.glb'));
    fs.writeFileSync(path.join(dir, 'b.glb'), fs.readFileSync(grid('clean')).subarray(0, 60));
    fs.copyFileSync(grid('clean'), path.join(dir, 'c.glb'));
    const r = await runCli(['audit', dir, '--fail-on', 'degenerate-uv', '--json', '--jobs', '2'], tmp);
    expect(r.code).toBe(3); // a failed file wins over a tripped gate
    const report = JSON.parse(r.stdout);
    expect(report.files.map((f: any) => f.status)).toEqual(['ok', 'failed', 'ok']);
    expect(report.files[0].gates).toEqual(['degenerate-uv']);
    expect(report.files[1].error.code).toBe('bad-glb');
    expect(r.stderr.trim().split('\n')).toEqual([expect.stringMatching(/^tanframe: .*b\.glb: /)]);
  });
});

describe('exit status (DESIGN.md: 0 done, 1 gate tripped, 2 usage, 3 unreadable input)', () => {
  it('audit', async () => {
    expect((await runCli(['audit', grid('clean'), '--fail-on', 'degenerate-uv'], tmp)).code).toBe(0);
    expect((await runCli(['audit', grid('degenerate-uv'), '--fail-on', 'degenerate-uv'], tmp)).code).toBe(1);
    expect((await runCli(['audit', grid('degenerate-uv')], tmp)).code).toBe(0); // findings without a gate
    expect((await runCli(['audit', path.join(tmp, 'no-such.glb')], tmp)).code).toBe(3);
    expect((await runCli(['audit', grid('clean'), '--fail-on', 'nonsense'], tmp)).code).toBe(2);
    expect((await runCli(['audit', grid('clean'), '--jobs', '0'], tmp)).code).toBe(2);
    expect((await runCli(['audit', grid('clean'), '--shard', '4/3'], tmp)).code).toBe(2);
  });

  it('bake', async () => {
    const out = path.join(tmp, 'baked');
    const gated = await runCli(['bake', grid('degenerate-uv'), '-o', path.join(out, 'd.glb'), '--fail-on', 'degenerate-uv'], tmp);
    expect(gated.code).toBe(1);
    expect(fs.existsSync(path.join(out, 'd.glb'))).toBe(true); // outputs are still written
    expect((await runCli(['bake', grid('clean'), '-o', path.join(out, 'c.glb'), '--fail-on', 'degenerate-uv'], tmp)).code).toBe(0);
    expect((await runCli(['bake', path.join(tmp, 'no-such.glb'), '-o', path.join(out, 'x.glb')], tmp)).code).toBe(3);
    expect((await runCli(['bake', grid('clean')], tmp)).code).toBe(2); // no -o, --in-place or --dry-run
  });
});

describe('human summary', () => {
  it('worstFileFirstWithATableAndColourOnlyOnATerminalWithoutNoColor', async () => {
    const args = ['audit', grid('clean'), grid('degenerate-uv'), grid('overlap'), '--fail-on', 'degenerate-uv', '--jobs', '1'];
    const plain = await runCli(args, tmp);
    expect(plain.code).toBe(1);
    expect(plain.stdout).not.toMatch(/\u001b\[/);
    const lines = plain.stdout.split('\n');
    const at = (name: string) => lines.findIndex((l) => l.includes(`${name}.glb`));
    // gated (degenerate-uv) before findings only (overlap) before clean.
    expect(at('degenerate-uv')).toBeGreaterThan(0);
    expect(at('degenerate-uv')).toBeLessThan(at('overlap'));
    expect(at('overlap')).toBeLessThan(at('clean'));
    expect(lines[at('degenerate-uv')]).toMatch(/^gated\s+.*\[degenerate-uv\]/);
    // The tripped gate's count against its limit, then the table: a header, then the primitive
    // row with the count in the UV degen column (mirrored triangles are a note, not a column).
    expect(lines[at('degenerate-uv') + 1]).toBe('         degenerate-uv 3 > 0');
    const header = lines[at('degenerate-uv') + 2];
    const row = lines[at('degenerate-uv') + 3];
    expect(header).toMatch(/primitive\s+triangles\s+vertices\s+splits\s+UV degen/);
    const col = header.indexOf('UV degen') + 'UV degen'.length;
    expect(row.slice(0, col).trimEnd().endsWith(' 3')).toBe(true);
    expect(lines[at('clean')]).toMatch(/^ok\s+.*no findings/);
    expect(plain.stdout).toMatch(/total: 3 files: 1 clean, 1 with findings, 1 gated, 0 unchecked, 0 up-to-date, 0 failed \|/);

    const tty = await runCli(args, tmp, {}, { stdoutIsTTY: true });
    expect(tty.stdout).toMatch(/\u001b\[31;1mgated/);
    const noColor = await runCli(args, tmp, { NO_COLOR: '1' }, { stdoutIsTTY: true });
    expect(noColor.stdout).not.toMatch(/\u001b\[/);
    expect(noColor.stdout).toBe(noColor.stdout.replace(/\u001b\[[0-9;]*m/g, ''));
  });
});
