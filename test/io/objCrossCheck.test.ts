// Our OBJ reader against an independent one: @loaders.gl/obj's parser (a devDependency; it
// returns one triangle soup in file order, fan-triangulating each face, and reads v as
// written). Face by face, the corners (position, texture coordinate, normal) our reader
// produces must be the corners that parser produces. Compared per face rather than per
// triangle because the two readers may cut a quad along different diagonals, and as a multiset
// of faces because our reader groups faces by material. Convention: our reader stores
// v as 1 - v (glTF), so its texture coordinates are turned back before comparing.
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { OBJLoader } from '@loaders.gl/obj';
import { afterAll, describe, expect, it } from 'vitest';
import { readObj } from '../../src/io/objRead.js';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-objx-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

/** Texture coordinates and normals agree to float32 rounding of 1 - v (ours) versus v. */
const TOLERANCE = 1e-6;

interface Corner { p: number[]; uv: number[] | null; n: number[] | null }

/** Corners per face, in file order, from the independent parser (fans: k corners -> k - 2 triangles). */
function referenceFaces(text: string): Corner[][] {
  const m: any = (OBJLoader as any).parseTextSync(text, {});
  const P = m.attributes.POSITION?.value as Float32Array;
  const T = m.attributes.TEXCOORD_0?.value as Float32Array | undefined;
  const N = m.attributes.NORMAL?.value as Float32Array | undefined;
  const corner = (i: number): Corner => ({
    p: Array.from(P.subarray(3 * i, 3 * i + 3)),
    uv: T ? Array.from(T.subarray(2 * i, 2 * i + 2)) : null,
    n: N ? Array.from(N.subarray(3 * i, 3 * i + 3)) : null,
  });
  const faces: Corner[][] = [];
  let c = 0;
  for (const line of text.split(/\r?\n/)) {
    const t = line.trim().split(/\s+/);
    if (t[0] !== 'f') continue;
    const k = t.length - 1;
    const face: Corner[] = [];
    for (let tri = 0; tri < k - 2; tri++) for (let j = 0; j < 3; j++) face.push(corner(c++));
    faces.push(face);
  }
  expect(c * 3, 'the reference parser produced one corner per fan corner').toBe(P.length);
  return faces;
}

/** Corners per face from our reader, v turned back to the OBJ convention. */
async function ourFaces(file: string): Promise<{ faces: Corner[][]; hasUv: boolean; hasNormal: boolean }> {
  const asset = await readObj(file);
  const faces: Corner[][] = [];
  let hasUv = true, hasNormal = true;
  for (const prim of asset.primitives) {
    const P = prim.attributes.POSITION.array as Float32Array;
    const T = prim.attributes.TEXCOORD_0?.array as Float32Array | undefined;
    const N = prim.attributes.NORMAL?.array as Float32Array | undefined;
    hasUv &&= !!T;
    hasNormal &&= !!N;
    const idx = prim.indices!;
    const byFace = new Map<number, Corner[]>();
    for (let c = 0; c < idx.length; c++) {
      const v = idx[c];
      const face = prim.faces ? prim.faces[Math.floor(c / 3)] : Math.floor(c / 3);
      if (!byFace.has(face)) byFace.set(face, []);
      byFace.get(face)!.push({
        p: Array.from(P.subarray(3 * v, 3 * v + 3)),
        uv: T ? [T[2 * v], 1 - T[2 * v + 1]] : null,
        n: N ? Array.from(N.subarray(3 * v, 3 * v + 3)) : null,
      });
    }
    faces.push(...byFace.values());
  }
  return { faces, hasUv, hasNormal };
}

/** A face as the sorted list of its distinct corners (triangulation-independent). */
function faceKey(face: Corner[], withUv: boolean, withNormal: boolean): string {
  const round = (x: number) => (Number.isFinite(x) ? (Math.round(x / TOLERANCE) * TOLERANCE).toFixed(6) : String(x));
  const keys = face.map((c) => [
    c.p.map((x) => String(Math.fround(x))).join(','),
    withUv && c.uv ? c.uv.map(round).join(',') : '',
    withNormal && c.n ? c.n.map(round).join(',') : '',
  ].join('|'));
  return [...new Set(keys)].sort().join(' ; ');
}

async function crossCheck(file: string): Promise<{ faces: number; hasUv: boolean; hasNormal: boolean }> {
  const text = fs.readFileSync(file, 'utf8');
  const ref = referenceFaces(text);
  const ours = await ourFaces(file);
  // Triangles per face agree (a k-gon is k - 2 triangles either way).
  const count = (faces: Corner[][]) => faces.map((f) => f.length).sort((a, b) => a - b);
  expect(count(ours.faces), `${file}: corners per face`).toEqual(count(ref));
  const refKeys = ref.map((f) => faceKey(f, ours.hasUv, ours.hasNormal)).sort();
  const ourKeys = ours.faces.map((f) => faceKey(f, ours.hasUv, ours.hasNormal)).sort();
  expect(ourKeys, `${file}: faces (positions, texture coordinates, normals)`).toEqual(refKeys);
  return { faces: ref.length, hasUv: ours.hasUv, hasNormal: ours.hasNormal };
}

function write(name: string, text: string): string {
  const p = path.join(tmp, name);
  fs.writeFileSync(p, text);
  return p;
}

describe('OBJ reader cross-checked with @loaders.gl/obj', () => {
  it('demoDockPlankAgreesFaceByFace', async () => {
    const r = await crossCheck(path.join(repoRoot, 'examples/harbor-props/dock/dock_plank.obj'));
    expect(r).toEqual({ faces: 34, hasUv: true, hasNormal: true });
  });

  it('valueFixturesAgree', async () => {
    const dir = path.join(repoRoot, 'fixtures/values');
    // @loaders.gl/obj does not implement line continuations ("\" at a line's end), so the
    // fixture made of them is checked by our own tests only (test/io/objRead.test.ts).
    const files = fs.readdirSync(dir).filter((f) => f.endsWith('.obj') && f !== 'obj-continued-lines.obj').sort();
    expect(files.length).toBeGreaterThan(0);
    for (const f of files) await crossCheck(path.join(dir, f));
  });

  it('negativeIndicesMaterialsAndPolygonsAgree', async () => {
    // Two materials, relative (negative) indices, a triangle, a quad, a pentagon and the
    // v//vn form:
    //   4 ---- 3        9 --- 8
    //   |      |       /       \
    //   1 ---- 2      5         7
    //                  \       /
    //                   ------6
    const file = write('mixed.obj', [
      'v 0 0 0', 'v 1 0 0', 'v 1 1 0', 'v 0 1 0',
      'vt 0 0', 'vt 1 0', 'vt 1 1', 'vt 0 1',
      'vn 0 0 1',
      'usemtl a',
      'f -4/-4/-1 -3/-3/-1 -2/-2/-1 -1/-1/-1',
      'f 1/1/1 2/2/1 3/3/1',
      'v 2 0.5 0', 'v 2.5 0 0.1', 'v 3 0.5 0', 'v 2.8 1 0.2', 'v 2.2 1 0',
      'vt 0.1 0.5', 'vt 0.5 0.1', 'vt 0.9 0.5', 'vt 0.7 0.9', 'vt 0.3 0.9',
      'usemtl b',
      'f 5/5/1 6/6/1 7/7/1 8/8/1 9/9/1',
      'usemtl a',
      'f 1/1/1 3/3/1 4/4/1',
      '',
    ].join('\n'));
    expect(await crossCheck(file)).toEqual({ faces: 4, hasUv: true, hasNormal: true });
  });

  it('theComparisonNoticesAWrongTextureCoordinate', async () => {
    // The check is real: a reader that forgot the v convention would disagree.
    const file = path.join(repoRoot, 'examples/harbor-props/dock/dock_plank.obj');
    const ref = referenceFaces(fs.readFileSync(file, 'utf8'));
    const ours = await ourFaces(file);
    const flipped = ours.faces.map((f) => f.map((c) => ({ ...c, uv: c.uv ? [c.uv[0], 1 - c.uv[1]] : null })));
    const key = (faces: Corner[][]) => faces.map((f) => faceKey(f, true, true)).sort();
    expect(key(flipped)).not.toEqual(key(ref));
  });
});
