/**
 * OBJ + MTL reading: tiny inline files written to a temp folder, read back as an Asset.
 */
import { afterAll, describe, expect, it } from 'vitest';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
// @ts-ignore -- the validator ships no type declarations
import validator from 'gltf-validator';
import { objAttributesAsGltf, readObj } from '../../src/io/objRead.js';
import { computeFrames } from '../../src/frames/computeFrames.js';
import { TanframeError } from '../../src/mesh/errors.js';
import type { Asset } from '../../src/mesh/asset.js';

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-obj-'));
let counter = 0;
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

/** Writes the files into a fresh folder and returns the path of the first one. */
function writeFiles(files: Record<string, string | Uint8Array>): string {
  const dir = path.join(root, `case${counter++}`);
  let first = '';
  for (const [name, content] of Object.entries(files)) {
    const p = path.join(dir, name);
    fs.mkdirSync(path.dirname(p), { recursive: true });
    fs.writeFileSync(p, content);
    if (first === '') first = p;
  }
  return first;
}

async function readText(obj: string, extra: Record<string, string | Uint8Array> = {}): Promise<Asset> {
  return readObj(writeFiles({ 'model.obj': obj, ...extra }));
}

/** The error readObj throws for `obj` (fails the test when it does not throw). */
async function errorOf(obj: string): Promise<TanframeError> {
  try {
    await readText(obj);
  } catch (e) {
    expect(e).toBeInstanceOf(TanframeError);
    return e as TanframeError;
  }
  throw new Error('readObj did not throw');
}

const tris = (a: Asset, p = 0): number[] => Array.from(a.primitives[p]!.indices!);

describe('quad splitting', () => {
  // Source: MikkTSpace reference code, quad rule (from memory): split along the diagonal
  // shorter in texture space; on a tie, shorter in position space; 0-2 on a full tie.
  // Diagonal 0-2 -> (0,1,2),(0,2,3); diagonal 1-3 -> (0,1,3),(1,2,3).

  it('splits along 1-3 when that diagonal is shorter in texture space', async () => {
    // UV parallelogram: |uv2-uv0|^2 = 5, |uv3-uv1|^2 = 1; positions a unit square (tie).
    //  uv:   3(1,1)---2(2,1)
    //        /        /
    //     0(0,0)---1(1,0)
    const a = await readText(`v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0
vt 0 0\nvt 1 0\nvt 2 1\nvt 1 1
f 1/1 2/2 3/3 4/4\n`);
    expect(tris(a)).toEqual([0, 1, 3, 1, 2, 3]);
    expect(Array.from(a.primitives[0]!.faces!)).toEqual([0, 0]);
  });

  it('prefers the texture-space diagonal over a shorter position-space one', async () => {
    // Positions: diagonal 1-3 shorter (|P3-P1|^2 = 2 < |P2-P0|^2 = 10),
    // UVs: diagonal 0-2 shorter (|uv2-uv0|^2 = 1 < |uv3-uv1|^2 = 5).
    const a = await readText(`v 0 0 0\nv 2 0 0\nv 3 1 0\nv 1 1 0
vt 0 0\nvt 1 0\nvt 1 1\nvt -1 1
f 1/1 2/2 3/3 4/4\n`);
    expect(tris(a)).toEqual([0, 1, 2, 0, 2, 3]);
  });

  it('falls back to position-space lengths when the quad has no texture coordinates', async () => {
    //   3(1,1)----2(3,1)       |P2-P0|^2 = 10, |P3-P1|^2 = 2 -> diagonal 1-3
    //   /          /
    // 0(0,0)----1(2,0)
    const a = await readText('v 0 0 0\nv 2 0 0\nv 3 1 0\nv 1 1 0\nf 1 2 3 4\n');
    expect(tris(a)).toEqual([0, 1, 3, 1, 2, 3]);
    //  3(-1,1)-------2(1,1)    |P2-P0|^2 = 2, |P3-P1|^2 = 5 -> diagonal 0-2
    //       \         |
    //        0(0,0)--1(1,0)
    const b = await readText('v 0 0 0\nv 1 0 0\nv 1 1 0\nv -1 1 0\nf 1 2 3 4\n');
    expect(tris(b)).toEqual([0, 1, 2, 0, 2, 3]);
  });

  it('uses diagonal 0-2 on a full tie (square in both spaces)', async () => {
    const a = await readText(`v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0
vt 0 0\nvt 1 0\nvt 1 1\nvt 0 1
f 1/1 2/2 3/3 4/4\n`);
    expect(tris(a)).toEqual([0, 1, 2, 0, 2, 3]);
  });

  it('measures the texture-space diagonals on v as the file stores it, not on 1 - v', async () => {
    // Source: METHODS.md step 7 (diagonal measured on the file's float32 coordinates, before any
    // change of v origin). A square UV cell of side 0.1 turned by 30 degrees, coordinates written
    // to 6 decimals: both diagonals are 0.02 long up to rounding, so float32 rounding decides.
    //          2 (0.856218, 0.536603)
    //        /    \
    //   3 (0.769615, 0.486603)   1 (0.906218, 0.45)
    //        \    /
    //          0 (0.819615, 0.4)
    // On the stored v: |uv2-uv0|^2 < |uv3-uv1|^2 -> diagonal 0-2. On fround(1 - v) the order
    // reverses (1-3 would win), which is what measuring after the conversion picked.
    const uv = [[0.819615, 0.4], [0.906218, 0.45], [0.856218, 0.536603], [0.769615, 0.486603]];
    const f = Math.fround;
    const d2 = (p: number[], q: number[]) => {
      const du = f(f(q[0]!) - f(p[0]!)), dv = f(f(q[1]!) - f(p[1]!));
      return f(f(du * du) + f(dv * dv));
    };
    const flip = (p: number[]) => [p[0]!, 1 - p[1]!];
    expect(d2(uv[0]!, uv[2]!)).toBeLessThan(d2(uv[1]!, uv[3]!)); // stored v: 0-2 shorter
    expect(d2(flip(uv[1]!), flip(uv[3]!))).toBeLessThan(d2(flip(uv[0]!), flip(uv[2]!))); // 1 - v: 1-3 shorter
    const a = await readText(`v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0
${uv.map((p) => `vt ${p[0]} ${p[1]}`).join('\n')}
f 1/1 2/2 3/3 4/4\n`);
    expect(tris(a)).toEqual([0, 1, 2, 0, 2, 3]);
  });

  it('fans polygons with more than four corners and keeps one face id per polygon', async () => {
    // pentagon 0..4 followed by a triangle
    const a = await readText(`v 0 0 0\nv 1 0 0\nv 2 1 0\nv 1 2 0\nv 0 1 0
f 1 2 3 4 5\nf 1 3 4\n`);
    expect(tris(a)).toEqual([0, 1, 2, 0, 2, 3, 0, 3, 4, 0, 2, 3]);
    expect(Array.from(a.primitives[0]!.faces!)).toEqual([0, 0, 0, 1]);
  });

  it("solves a hexagon's fan triangles as independent triangles (no split inside the face from forced orientations)", async () => {
    // Source: METHODS.md step 7: polygons beyond quads are fanned from corner 0 and their
    // triangles are independent. Hexagon face with UVs along a zigzag, so the fan triangles
    // alternate orientation (det of (0,1,2) > 0, (0,2,3) < 0, (0,3,4) > 0, (0,4,5) < 0, OBJ v up):
    //   uv: 0 (0,0)  1 (1,0)  2 (1,1)  3 (2,1)  4 (4,3)  5 (5,3)
    const a = await readText(`v 1 0 0\nv 0.5 0.866 0\nv -0.5 0.866 0\nv -1 0 0\nv -0.5 -0.866 0\nv 0.5 -0.866 0
vt 0 0\nvt 1 0\nvt 1 1\nvt 2 1\nvt 4 3\nvt 5 3\nvn 0 0 1
f 1/1/1 2/2/1 3/3/1 4/4/1 5/5/1 6/6/1\n`);
    const p = a.primitives[0]!;
    expect(Array.from(p.faces!)).toEqual([0, 0, 0, 0]);
    const input = {
      positions: p.attributes.POSITION!.array as Float32Array,
      normals: p.attributes.NORMAL!.array as Float32Array,
      uvs: p.attributes.TEXCOORD_0!.array as Float32Array,
      indices: p.indices!,
    };
    const withFace = computeFrames({ ...input, faces: p.faces }, { method: 'mikktspace' });
    const apart = computeFrames(input, { method: 'mikktspace' });
    expect(Array.from(withFace.tangents)).toEqual(Array.from(apart.tangents));
    expect(Array.from(withFace.indices)).toEqual(Array.from(apart.indices));
    // Per triangle w (glTF origin): +1, -1, +1, -1, so the face really holds both sides.
    const w = [0, 1, 2, 3].map((t) => withFace.tangents[withFace.indices[t * 3 + 1]! * 4 + 3]);
    expect(w).toEqual([1, -1, 1, -1]);
  });
});

describe('face source lines', () => {
  it('records the line of each triangle\'s face statement, through groups, comments and continued lines', async () => {
    const a = await readText([
      '# five corners', // 1
      'v 0 0 0', 'v 1 0 0', 'v 1 1 0', 'v 0 1 0', 'v 2 2 0', // 2-6
      'usemtl a', // 7
      'f 1 2 3 4', // 8: a quad, two triangles
      '', // 9
      'f 1 2 \\', // 10: a triangle continued onto line 11 (it starts on 10)
      '  3',
      'usemtl b', // 12
      'f 1 2 3 5 4 # a pentagon, three triangles', // 13
      'usemtl a', // 14
      'f 2 3 4', // 15
    ].join('\n'));
    expect(Array.from(a.primitives[0]!.faceLines!)).toEqual([8, 8, 10, 15]);
    expect(Array.from(a.primitives[1]!.faceLines!)).toEqual([13, 13, 13]);
  });

  it('costs one entry per triangle', async () => {
    const lines = ['v 0 0 0', 'v 1 0 0', 'v 0 1 0'];
    for (let i = 0; i < 500; i++) lines.push('f 1 2 3');
    const a = await readText(lines.join('\n'));
    const fl = a.primitives[0]!.faceLines!;
    expect(fl).toBeInstanceOf(Uint32Array);
    expect(fl.length).toBe(500);
    expect(fl[0]).toBe(4);
    expect(fl[499]).toBe(503);
  });
});

describe('indices and vertices', () => {
  it('resolves negative indices relative to the vertices defined so far', async () => {
    // Two triangles written once with absolute and once with relative indices.
    const body = 'v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0 1\nvn 0 0 1\n';
    const abs = await readText(`${body}f 1/1/1 2/2/1 3/3/1\nv 1 1 0\nvt 1 1\nf 2/2/1 4/4/1 3/3/1\n`);
    const rel = await readText(`${body}f -3/-3/-1 -2/-2/-1 -1/-1/-1\nv 1 1 0\nvt 1 1\nf -3/-3/-1 -1/-1/-1 -2/-2/-1\n`);
    expect(tris(rel)).toEqual(tris(abs));
    expect(Array.from(rel.primitives[0]!.attributes.POSITION!.array)).toEqual(
      Array.from(abs.primitives[0]!.attributes.POSITION!.array),
    );
    expect(Array.from(rel.primitives[0]!.attributes.TEXCOORD_0!.array)).toEqual(
      Array.from(abs.primitives[0]!.attributes.TEXCOORD_0!.array),
    );
    expect(tris(abs)).toEqual([0, 1, 2, 1, 3, 2]);
  });

  it('shares a vertex between corners with the same (v, vt, vn) and splits it when vt differs', async () => {
    //  3---2      faces (1,2,3) and (1,3,4): corners 1 and 3 repeat with the same triple,
    //  | / |      except that the second face gives corner 3 another vt (a UV seam)
    //  0---1
    const a = await readText(`v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0
vt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvt 0.5 0.5
f 1/1 2/2 3/3\nf 1/1 3/5 4/4\n`);
    expect(tris(a)).toEqual([0, 1, 2, 0, 3, 4]);
    const pos = Array.from(a.primitives[0]!.attributes.POSITION!.array);
    expect(pos.length).toBe(15);
    expect(pos.slice(9, 12)).toEqual([1, 1, 0]); // the seam copy of v3
  });

  it("stores texture coordinates in glTF's convention, v' = 1 - v", async () => {
    // Source: METHODS.md glTF facts / glTF 2.0 spec 3.7.2.1: OBJ v is upward, glTF v downward.
    const a = await readText('v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0.25 0.1\nvt 0.75 0.5\nvt 0.5 1\nf 1/1 2/2 3/3\n');
    const uv = Array.from(a.primitives[0]!.attributes.TEXCOORD_0!.array);
    expect(uv).toEqual([0.25, Math.fround(0.9), 0.75, 0.5, 0.5, 0]);
  });

  it('emits NORMAL only when every corner has a vn, and warns about partial normals', async () => {
    const a = await readText('v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nf 1//1 2//1 3\n');
    expect(a.primitives[0]!.attributes.NORMAL).toBeUndefined();
    expect(a.warnings.some((w) => /lack normals/.test(w))).toBe(true);
    const b = await readText('v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nf 1//1 2//1 3//1\n');
    expect(Array.from(b.primitives[0]!.attributes.NORMAL!.array)).toEqual([0, 0, 1, 0, 0, 1, 0, 0, 1]);
    expect(b.primitives[0]!.attributes.TEXCOORD_0).toBeUndefined();
    expect(b.warnings).toEqual([]);
  });

  it('reads vertex colours into COLOR_0', async () => {
    const a = await readText('v 0 0 0 1 0 0\nv 1 0 0 0 1 0\nv 0 1 0 0 0 0.5\nf 1 2 3\n');
    const c = a.primitives[0]!.attributes.COLOR_0!;
    expect(c.type).toBe('VEC3');
    expect(Array.from(c.array)).toEqual([1, 0, 0, 0, 1, 0, 0, 0, 0.5]);
  });

  it('counts ignored lines and points in one warning', async () => {
    const a = await readText('v 0 0 0\nv 1 0 0\nv 0 1 0\nl 1 2\nl 2 3\np 1\nf 1 2 3\n');
    expect(a.warnings).toContain('ignored 2 line element(s) and 1 point element(s)');
  });
});

describe('groups and materials', () => {
  it('makes one primitive per usemtl material in order of first use, faces before usemtl first', async () => {
    const obj = `mtllib m.mtl
o Pier
v 0 0 0\nv 1 0 0\nv 0 1 0\nv 1 1 0
f 1 2 3
usemtl wood
f 2 4 3
usemtl rope
f 1 2 4
usemtl wood
f 1 4 3
`;
    const mtl = 'newmtl rope\nKd 0.5 0.4 0.3\nnewmtl wood\nKd 0.2 0.1 0\n';
    const a = await readText(obj, { 'm.mtl': mtl });
    expect(a.container).toBe('obj');
    expect(a.json.meshes[0].name).toBe('Pier');
    expect(a.json.meshes[0].primitives.length).toBe(3);
    expect(a.primitives.map((p) => p.material)).toEqual([null, 0, 1]);
    expect(a.json.meshes[0].primitives[0].material).toBeUndefined();
    expect(a.json.materials.map((m: any) => m.name)).toEqual(['wood', 'rope']);
    expect(a.json.materials[0].pbrMetallicRoughness.baseColorFactor).toEqual([0.2, 0.1, 0, 1]);
    // the wood primitive holds faces 2 and 4 of the file, in file order
    const wood = a.primitives[1]!;
    const pos = wood.attributes.POSITION!.array;
    const corner = (i: number): number[] => Array.from(pos.slice(wood.indices![i]! * 3, wood.indices![i]! * 3 + 3));
    expect([corner(0), corner(1), corner(2)]).toEqual([[1, 0, 0], [1, 1, 0], [0, 1, 0]]);
    expect([corner(3), corner(4), corner(5)]).toEqual([[0, 0, 0], [1, 1, 0], [0, 1, 0]]);
    expect(a.buffers).toEqual([]);
    expect(a.warnings).toEqual([]);
  });

  it('names the mesh after the file when there is no o statement', async () => {
    const p = writeFiles({ 'dock_plank.obj': 'v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n' });
    const a = await readObj(p);
    expect(a.json.meshes[0].name).toBe('dock_plank');
  });

  it('turns map_Kd and a norm map with -bm into baseColorTexture and normalTexture', async () => {
    const png = new Uint8Array([0x89, 0x50, 0x4e, 0x47, 1, 2, 3]);
    const obj = 'mtllib mat/plank.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl plank\nf 1 2 3\n';
    const mtl = `newmtl plank
Kd 1 1 1
map_Kd -o 0.5 0.5 -clamp on plank color.png
norm -bm 0.5 plank_normal.png
`;
    const a = await readText(obj, {
      'mat/plank.mtl': mtl,
      'mat/plank color.png': png,
      'mat/plank_normal.png': png,
    });
    expect(a.warnings).toEqual([]);
    const m = a.json.materials[0];
    expect(m.normalTexture).toEqual({ index: 1, scale: 0.5 });
    expect(m.pbrMetallicRoughness.baseColorTexture).toEqual({ index: 0 });
    // texture names in an .mtl are relative to the .mtl; glTF URIs are relative to the asset
    expect(a.json.images).toEqual([
      { uri: 'mat/plank%20color.png', mimeType: 'image/png' },
      { uri: 'mat/plank_normal.png', mimeType: 'image/png' },
    ]);
    expect(a.json.textures).toEqual([{ source: 0 }, { source: 1 }]);
    expect(a.externalImages.map((e) => [e.image, e.uri, e.bytes && Array.from(e.bytes)])).toEqual([
      [0, 'mat/plank%20color.png', Array.from(png)],
      [1, 'mat/plank_normal.png', Array.from(png)],
    ]);
  });

  it('accepts map_Bump and bump, and shares one image between materials', async () => {
    const obj = 'mtllib m.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl a\nf 1 2 3\nusemtl b\nf 1 3 2\n';
    const mtl = 'newmtl a\nmap_Bump n.png\nnewmtl b\nbump -bm 2 n.png\n';
    const a = await readText(obj, { 'm.mtl': mtl, 'n.png': new Uint8Array([1]) });
    expect(a.json.materials[0].normalTexture).toEqual({ index: 0 });
    expect(a.json.materials[1].normalTexture).toEqual({ index: 0, scale: 2 });
    expect(a.json.images.length).toBe(1);
    expect(a.externalImages.length).toBe(1);
  });

  it('warns (and keeps going) when the .mtl file is missing', async () => {
    const a = await readText('mtllib gone.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl wood\nf 1 2 3\n');
    expect(a.warnings.length).toBe(1);
    expect(a.warnings[0]).toMatch(/gone\.mtl.*not found/);
    expect(a.json.materials).toEqual([{ name: 'wood', pbrMetallicRoughness: { metallicFactor: 0 } }]);
  });

  it('warns when a texture file is missing, keeping the URI with null bytes', async () => {
    const a = await readText('mtllib m.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl w\nf 1 2 3\n', {
      'm.mtl': 'newmtl w\nnorm missing_normal.png\n',
    });
    expect(a.warnings.length).toBe(1);
    expect(a.warnings[0]).toMatch(/missing_normal\.png.*not found/);
    expect(a.json.images).toEqual([{ uri: 'missing_normal.png', mimeType: 'image/png' }]);
    expect(a.externalImages.length).toBe(1);
    expect(a.externalImages[0]!.bytes).toBeNull();
    expect(a.externalImages[0]!.uri).toBe('missing_normal.png');
  });

  it("refuses an .mtl or texture name that leaves the OBJ's folder", async () => {
    // Source: DESIGN.md Guarantees: `..` escapes and absolute paths are refused.
    for (const obj of ['mtllib ../outside.mtl\n', 'mtllib /etc/x.mtl\n']) {
      await expect(readText(`${obj}v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n`)).rejects.toMatchObject({ code: 'bad-uri' });
    }
    await expect(
      readText('mtllib m.mtl\nv 0 0 0\nv 1 0 0\nv 0 1 0\nusemtl w\nf 1 2 3\n', { 'm.mtl': 'newmtl w\nmap_Kd ../../x.png\n' }),
    ).rejects.toMatchObject({ code: 'bad-uri' });
  });
});

describe('malformed files fail with bad-obj and the line number', () => {
  const tri = 'v 0 0 0\nv 1 0 0\nv 0 1 0\n';
  const cases: [string, string, RegExp][] = [
    ['index 0', `${tri}f 0 1 2\n`, /^line 4: vertex index 0/],
    ['positive index past the end', `${tri}f 1 2 4\n`, /^line 4: vertex index 4 out of range/],
    ['relative index before the start', `${tri}f -1 -2 -4\n`, /^line 4: relative vertex index -4 out of range/],
    ['texture index past the end', `${tri}vt 0 0\nf 1/1 2/2 3/1\n`, /^line 5: texture index 2 out of range/],
    ['normal index 0', `${tri}vn 0 0 1\nf 1//0 2//1 3//1\n`, /^line 5: normal index 0/],
    ['malformed number', `v 0 0 0\nv 1 x 0\nv 0 1 0\nf 1 2 3\n`, /^line 2: malformed vertex/],
    ['NaN coordinate', `v 0 0 0\nv 1 nan 0\nv 0 1 0\nf 1 2 3\n`, /^line 2: malformed vertex/],
    ['too few vertex numbers', `v 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n`, /^line 1: malformed vertex/],
    ['malformed face corner', `${tri}f 1 2 3/1/1/1\n`, /^line 4: malformed face corner/],
    ['non-integer index', `${tri}f 1 2 2.5\n`, /^line 4: malformed vertex index/],
    ['face with two corners', `${tri}\n# comment\nf 1 2\n`, /^line 6: face has 2 corners/],
    ['no faces', `${tri}l 1 2\n`, /^no faces$/],
  ];
  for (const [name, obj, re] of cases) {
    it(name, async () => {
      const e = await errorOf(obj);
      expect(e.code).toBe('bad-obj');
      expect(e.message).toMatch(re);
      expect(e.message).not.toContain('\n');
    });
  }

  it('reports an empty file as empty-file', async () => {
    const e = await errorOf('');
    expect(e.code).toBe('empty-file');
  });
});

describe('objAttributesAsGltf', () => {
  it('stores the primitives as accessors that the Khronos validator accepts', async () => {
    const a = await readText(`mtllib m.mtl
v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0
vt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nvn 0 0 1
f 1/1/1 2/2/1 3/3/1 4/4/1
usemtl w
f 1/1/1 3/3/1 4/4/1
`, { 'm.mtl': 'newmtl w\nKd 0.5 0.5 0.5\n' });
    const { json, buffer } = objAttributesAsGltf(a);
    expect(json.accessors[json.meshes[0].primitives[0].attributes.POSITION]).toMatchObject({
      min: [0, 0, 0],
      max: [1, 1, 0],
      count: 4,
    });
    expect(json.accessors[json.meshes[0].primitives[0].indices].componentType).toBe(5123);
    expect(buffer.byteLength % 4).toBe(0);
    expect(a.json.accessors).toBeUndefined(); // the asset's own JSON is left alone
    json.buffers[0].uri = `data:application/octet-stream;base64,${Buffer.from(buffer).toString('base64')}`;
    // Source: Khronos gltf-validator (the standard's reference validator).
    const report = await validator.validateString(JSON.stringify(json), { writeTimestamp: false });
    expect(report.issues.numErrors).toBe(0);
  });
});

describe('line continuations', () => {
  it('join a backslash-ended line with the next, trailing white space and CRLF included', async () => {
    // One triangle whose v and f statements are split over lines (OBJ format: "\" at the end
    // of a line continues it); the face ends in a chain of empty continued lines.
    const obj = 'v 0 \\\n0 0\nv 1 0 0 \\  \r\n\nv 0 1 0\nf 1 \\\r\n2 \\\t\n3 \\\n\\\n\\\n\n';
    const a = await readText(obj);
    expect(Array.from(a.primitives[0].attributes.POSITION!.array)).toEqual([0, 0, 0, 1, 0, 0, 0, 1, 0]);
    expect(Array.from(a.primitives[0].indices!)).toEqual([0, 1, 2]);
  });

  it('count the joined lines for messages and keep a backslash on the last line of the file', async () => {
    // Lines 4-6 are one face; line 7 ends the file with a backslash, which stays a token.
    const e = await errorOf('v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 \\\n2 \\\n3\nf 1 2 3 \\');
    expect(e.code).toBe('bad-obj');
    expect(e.message).toBe("line 7: malformed vertex index '\\' in face");
  });
});
