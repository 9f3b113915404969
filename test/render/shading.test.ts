import { describe, expect, it } from 'vitest';
import { readAssetBytes } from '../../src/lib/processFile.js';
import { buildRenderScene, defaultRenderOptions } from '../../src/lib/renderAsset.js';
import {
  FRAME_MARGIN_FOR_TESTS, createVisibility, lightInView, orthoCamera, prepareInstance, rasterizeInstance, sceneBounds, shadeView,
  type RenderScene,
} from './renderInternals.js';
import { unitQuad } from '../helpers/gltfBuilder.js';
import { encodeNormal, materialGlb, pixel, renderBytes, srgb } from '../helpers/renderAssets.js';
import { mulberry32, sphere } from '../helpers/surfaces.js';
import { writeRawObj } from './objText.js';

const ALBEDO = 0.4;

describe('shaded mode: Lambert shading of a normal-mapped plane', () => {
  it('a flat map (128,128,255) with the light along the view direction renders the albedo itself, sRGB encoded, within 1/255', async () => {
    // Source: Lambert's cosine law (n . l = 1 facing the light) and DESIGN.md's formula
    // c = albedo * (0.15 + 0.85 * max(0, n . l)), then sRGB (IEC 61966-2-1); texel (128,128,255)
    // is the unperturbed normal (common practice, METHODS.md).
    //   3 ---- 2   unit quad at z = 0 facing +Z, seen from the front
    //   |    / |
    //   0 ---- 1
    const glb = materialGlb([unitQuad()], { baseColor: [ALBEDO, ALBEDO, ALBEDO], normalTexel: [128, 128, 255] });
    const s = await renderBytes(glb, 'plane.glb', { views: ['front'], modes: ['shaded'], size: 64, light: [0, 0] });
    expect([s.width, s.height]).toEqual([64, 64]);
    const want = srgb(ALBEDO) * 255;
    for (const [x, y] of [[32, 32], [20, 20], [44, 40], [25, 45]]) {
      const p = pixel(s, x, y);
      expect(p[3]).toBe(255);
      for (let c = 0; c < 3; c++) expect(Math.abs(p[c] - want)).toBeLessThanOrEqual(1);
    }
    // The background keeps alpha 0 (DESIGN.md: RGBA, background pixels have alpha 0).
    expect(pixel(s, 0, 0)[3]).toBe(0);
    expect(pixel(s, 63, 63)[3]).toBe(0);
  });

  // A map texel encoding the tangent-space normal (sin a cos b, sin a sin b, cos a): on the quad the
  // frame is t = +X, bitangent +Y (toward decreasing glTF v, image up), N = +Z, so the shading normal
  // is that vector in world space. Expected: albedo * (0.15 + 0.85 * max(0, n . l)), where n . l is
  // the cosine of the angle between the tilted normal and the light (Lambert's cosine law).
  const cases: { tilt: number; around: number; light: [number, number] }[] = [
    { tilt: 20, around: 0, light: [0, 0] },
    { tilt: 45, around: 0, light: [0, 0] },
    { tilt: 60, around: 90, light: [0, 0] },
    { tilt: 30, around: 90, light: [0, 50] },
    { tilt: 35, around: 210, light: [30, 40] },
    { tilt: 50, around: 300, light: [-40, 20] },
  ];
  for (const origin of ['top-left (glTF)', 'bottom-left (OBJ)'] as const) {
    it(`a map tilted by a known angle renders 0.15 + 0.85 cos(angle) times the albedo within 1/255, UV origin ${origin}`, async () => {
      for (const c of cases) {
        const a = (c.tilt * Math.PI) / 180, b = (c.around * Math.PI) / 180;
        const n: [number, number, number] = [Math.sin(a) * Math.cos(b), Math.sin(a) * Math.sin(b), Math.cos(a)];
        const texel = encodeNormal(n);
        let s;
        if (origin === 'top-left (glTF)') {
          s = await renderBytes(materialGlb([unitQuad()], { baseColor: [ALBEDO, ALBEDO, ALBEDO], normalTexel: [texel[0], texel[1], texel[2]] }), 'plane.glb',
            { views: ['front'], modes: ['shaded'], size: 48, light: c.light });
        } else {
          const files = writeRawObj(texel);
          s = await renderBytes(files['plane.obj'], 'plane.obj', { views: ['front'], modes: ['shaded'], size: 48, light: c.light }, files);
        }
        const l = lightInView(c.light[0], c.light[1]); // the front camera's view space is world space
        const cos = n[0] * l[0] + n[1] * l[1] + n[2] * l[2];
        const want = srgb(ALBEDO * (0.15 + 0.85 * Math.max(0, cos))) * 255;
        const p = pixel(s, 24, 24);
        expect(p[3]).toBe(255);
        expect(Math.abs(p[0] - want), `tilt ${c.tilt} around ${c.around} light ${c.light}`).toBeLessThanOrEqual(1);
      }
    });
  }
});

describe('the TBN identity', () => {
  it('lighting a mapped texel in object space (TBN n) equals lighting it in tangent space (transpose applied to the light), to 1e-6, for random orthonormal frames', () => {
    // Source: for an orthonormal frame the inverse of TBN is its transpose (METHODS.md, normal-map
    // spaces), so dot(TBN n, l) = dot(n, (t.l, b.l, N.l)). The renderer lights in object space; the
    // expectation is computed in tangent space.
    const rnd = mulberry32(1601);
    for (let k = 0; k < 25; k++) {
      // A random unit normal facing the camera (z > 0.3) and a random unit tangent orthogonal to it.
      let N: number[];
      do { N = [rnd() * 2 - 1, rnd() * 2 - 1, rnd()]; } while (Math.hypot(N[0], N[1], N[2]) < 0.2 || N[2] / Math.hypot(N[0], N[1], N[2]) < 0.3);
      const nl = Math.hypot(N[0], N[1], N[2]);
      N = N.map((x) => x / nl);
      const r = [rnd() * 2 - 1, rnd() * 2 - 1, rnd() * 2 - 1];
      const d = r[0] * N[0] + r[1] * N[1] + r[2] * N[2];
      let t = [r[0] - d * N[0], r[1] - d * N[1], r[2] - d * N[2]];
      const tl = Math.hypot(t[0], t[1], t[2]);
      t = t.map((x) => x / tl);
      const w = rnd() < 0.5 ? -1 : 1;
      const b = [w * (N[1] * t[2] - N[2] * t[1]), w * (N[2] * t[0] - N[0] * t[2]), w * (N[0] * t[1] - N[1] * t[0])];
      const ts = [rnd() * 1.6 - 0.8, rnd() * 1.6 - 0.8, 0.3 + rnd()];
      // A quad in the plane through the origin with normal N: corners at +-e1 +-e2.
      const e1 = t, e2 = [N[1] * t[2] - N[2] * t[1], N[2] * t[0] - N[0] * t[2], N[0] * t[1] - N[1] * t[0]];
      const positions = new Float32Array(12), normals = new Float32Array(12), tangents = new Float32Array(16);
      [[-1, -1], [1, -1], [1, 1], [-1, 1]].forEach(([p, q], v) => {
        for (let c = 0; c < 3; c++) { positions[v * 3 + c] = p * e1[c] + q * e2[c]; normals[v * 3 + c] = N[c]; tangents[v * 4 + c] = t[c]; }
        tangents[v * 4 + 3] = w;
      });
      const texel = [0, 1, 2].map((c) => ts[c] / Math.hypot(ts[0], ts[1], ts[2]) * 0.5 + 0.5);
      const scene: RenderScene = {
        primitives: [{ positions, normals, uvs: [new Float32Array([0, 0, 1, 0, 1, 1, 0, 1])], tangents, referenceTangents: null,
          indices: new Uint32Array([0, 1, 2, 0, 2, 3]), findings: null, material: 0 }],
        instances: [{ primitive: 0, matrix: new Float64Array([1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]) }],
        materials: [{ baseColor: [1, 1, 1], baseColorTexture: null, normalScale: 1, doubleSided: false,
          normalTexture: { image: 0, texCoord: 0, wrapS: 33071, wrapT: 33071, transform: null } }],
        // 16-bit samples: the map holds the normal to 1/65535.
        images: [{ width: 1, height: 1, data: new Uint16Array([...texel.map((x) => Math.round(x * 65535)), 65535]) }],
      };
      const lv = lightInView(rnd() * 360 - 180, rnd() * 80);
      const light = [lv[0], lv[1], lv[2]] as [number, number, number];
      const size = 8;
      const vis = createVisibility(size * 2, size * 2);
      const prepared = [prepareInstance(scene, scene.instances[0])];
      const m = orthoCamera('front', sceneBounds(scene)).viewProjection;
      const sc = new Float64Array(16);
      for (let v = 0; v < 4; v++) {
        const x = positions[v * 3], y = positions[v * 3 + 1], z = positions[v * 3 + 2];
        sc[v * 4] = ((m[0] * x + m[4] * y + m[8] * z + m[12]) + 1) * size;
        sc[v * 4 + 1] = (1 - (m[1] * x + m[5] * y + m[9] * z + m[13])) * size;
        sc[v * 4 + 2] = m[2] * x + m[6] * y + m[10] * z + m[14];
        sc[v * 4 + 3] = 1;
      }
      const back = new Uint8Array(2);
      rasterizeInstance(vis, sc, scene.primitives[0].indices, 2, 0, prepared[0].frontSign, true, back);
      const shaded = shadeView(scene, prepared, vis, 2, [back], ['shaded'], light);
      // The decoded map normal, as stored (16-bit), and the light in tangent space.
      const dec = [0, 1, 2].map((c) => (Math.round(texel[c] * 65535) / 65535) * 2 - 1);
      const dl = Math.hypot(dec[0], dec[1], dec[2]);
      const lts = [t, b, N].map((axis) => axis[0] * light[0] + axis[1] * light[1] + axis[2] * light[2]);
      const cos = (dec[0] * lts[0] + dec[1] * lts[1] + dec[2] * lts[2]) / dl;
      const want = 0.15 + 0.85 * Math.max(0, cos);
      const centre = (size / 2) * size + size / 2;
      expect(shaded.covered[centre]).toBe(4);
      expect(Math.abs(shaded.colour[0][centre * 3] - want), `frame ${k}`).toBeLessThan(1e-6);
    }
  });
});

describe('a sphere with a flat map', () => {
  it('matches the analytic Lambert sphere pixel for pixel within 2/255 away from the silhouette', async () => {
    // Source: Lambert's cosine law on an analytic sphere: at screen point (x, y) inside radius R the
    // visible surface normal is (x, y, sqrt(R^2 - x^2 - y^2)) / R in the view's axes; the mesh is
    // the sphere band of test/helpers/surfaces.ts (poles along z), seen from the right (+X).
    const m = sphere({ n: 48, uvOrigin: 'top-left' });
    const glb = materialGlb([{
      attributes: {
        POSITION: { array: m.positions, type: 'VEC3' }, NORMAL: { array: m.normals, type: 'VEC3' }, TEXCOORD_0: { array: m.uvs, type: 'VEC2' },
      },
      indices: m.indices, material: 0,
    }], { baseColor: [0.6, 0.6, 0.6], normalTexel: [128, 128, 255] });
    const size = 96, light: [number, number] = [30, 40];
    const s = await renderBytes(glb, 'sphere.glb', { views: ['right'], modes: ['shaded'], size, light });
    // Bounding sphere: centre 0, radius 1 (the band reaches the equator); the picture spans
    // 2 * half with half = 1 / (1 - 2 * margin).
    const half = 1 / (1 - 2 * FRAME_MARGIN_FOR_TESTS);
    const l = lightInView(light[0], light[1]);
    let compared = 0, worst = 0;
    for (let py = 0; py < size; py++) {
      for (let px = 0; px < size; px++) {
        const x = (((px + 0.5) / size) * 2 - 1) * half, y = (1 - ((py + 0.5) / size) * 2) * half;
        const r2 = x * x + y * y;
        if (r2 > 0.85 * 0.85) continue;
        // Seen from +X, the view's x axis is world -Z: keep away from the band's open poles (|z| > cos 0.1 pi).
        if (Math.abs(x) > 0.8) continue;
        const n = [x, y, Math.sqrt(1 - r2)];
        const cos = n[0] * l[0] + n[1] * l[1] + n[2] * l[2];
        const want = srgb(0.6 * (0.15 + 0.85 * Math.max(0, cos))) * 255;
        const p = pixel(s, px, py);
        expect(p[3]).toBe(255);
        worst = Math.max(worst, Math.abs(p[0] - want));
        compared++;
      }
    }
    expect(compared).toBeGreaterThan(3000);
    expect(worst).toBeLessThanOrEqual(2);
  });
});

describe('the scene as read', () => {
  it('builds one instance per node that holds a mesh, with the node transform', async () => {
    // Source: glTF 2.0, 3.5.2: a node's TRS is T * R * S; a translated quad moves the bounding sphere with it.
    const glb = materialGlb([unitQuad()], { normalTexel: null }, { translation: [10, 0, 0] });
    const built = await buildRenderScene(await readAssetBytes(glb, 'q.glb'), defaultRenderOptions());
    expect(built.scene.instances.length).toBe(1);
    const b = sceneBounds(built.scene);
    expect(b[0]).toBeCloseTo(10.5, 6);
    expect(b[1]).toBeCloseTo(0.5, 6);
    expect(b[3]).toBeCloseTo(Math.SQRT1_2, 6);
  });
});

describe('a node hierarchy that is not a tree', () => {
  it('stops walking after MAX_NODE_VISITS visits and says so, in time linear in the cap', async () => {
    // Source: glTF 2.0, 3.5.3 (nodes form disjoint strict trees: one parent at most). A chain of 24
    // nodes each naming the next twice reaches the last node by 2^23 paths.
    const { buildGltf, glbBytes } = await import('../helpers/gltfBuilder.js');
    const { json, bin } = buildGltf([unitQuad()]);
    json.nodes = Array.from({ length: 24 }, (_, i) => (i < 23 ? { children: [i + 1, i + 1] } : { mesh: 0 }));
    json.scenes = [{ nodes: [0] }];
    const built = await buildRenderScene(await readAssetBytes(glbBytes(json, bin), 'dag.glb'), defaultRenderOptions());
    expect(built.notes.join('\n')).toMatch(/more than 100,000 paths/);
    expect(built.scene.instances.length).toBeLessThanOrEqual(100_000);
    expect(built.scene.instances.length).toBeGreaterThan(1000);
  });
});

describe('faces and transforms', () => {
  it('a double-sided quad seen from the back is lit with its normal reversed; a single-sided one is not drawn', async () => {
    // Source: glTF 2.0, 3.9.6 (doubleSided: back-face culling off and the back face's normals
    // reversed before lighting; false: back faces culled). Seen from the back with the light along
    // the view direction, the reversed normal faces the light: the albedo itself.
    const two = await renderBytes(materialGlb([unitQuad()], { baseColor: [ALBEDO, ALBEDO, ALBEDO], doubleSided: true }), 'two.glb',
      { views: ['back'], modes: ['shaded'], size: 32, light: [0, 0] });
    const p = pixel(two, 16, 16);
    expect(p[3]).toBe(255);
    expect(Math.abs(p[0] - srgb(ALBEDO) * 255)).toBeLessThanOrEqual(1);
    const one = await renderBytes(materialGlb([unitQuad()], { baseColor: [ALBEDO, ALBEDO, ALBEDO] }), 'one.glb',
      { views: ['back'], modes: ['shaded'], size: 32, light: [0, 0] });
    expect(one.rgba.every((v, i) => i % 4 !== 3 || v === 0)).toBe(true);
  });

  it('a mirroring node transform keeps the quad front-facing and lights the map as its mirror image', async () => {
    // Source: glTF 2.0, 3.7.4 (a negative determinant turns front faces clockwise) and 3.7.2.1
    // (bitangent = cross(N, t) * w, which the mirror must keep pointing where the file's does).
    // Map tilted 40 degrees toward +t; mirrored in x, +t points to world -X. Light at azimuth 60
    // (toward +X): cos(60 - 40) unmirrored, cos(60 + 40) mirrored. Tilted toward +b instead, the
    // mirror leaves +b at world +Y: a light at elevation 50 gives cos(50 - 40) both ways.
    const a = (40 * Math.PI) / 180;
    for (const [n, light, plain, mirrored] of [
      [[Math.sin(a), 0, Math.cos(a)], [60, 0], 20, 100],
      [[0, Math.sin(a), Math.cos(a)], [0, 50], 10, 10],
    ] as [[number, number, number], [number, number], number, number][]) {
      const t = encodeNormal(n);
      for (const [scale, deg] of [[[1, 1, 1], plain], [[-1, 1, 1], mirrored]] as [number[], number][]) {
        const s = await renderBytes(materialGlb([unitQuad()], { baseColor: [ALBEDO, ALBEDO, ALBEDO], normalTexel: [t[0], t[1], t[2]] }, { scale }), 'm.glb',
          { views: ['front'], modes: ['shaded'], size: 32, light });
        const want = srgb(ALBEDO * (0.15 + 0.85 * Math.max(0, Math.cos((deg * Math.PI) / 180)))) * 255;
        const p = pixel(s, 16, 16);
        expect(p[3], `scale ${scale}`).toBe(255);
        expect(Math.abs(p[0] - want), `scale ${scale} light ${light}: ${p[0]} vs ${want}`).toBeLessThanOrEqual(1);
      }
    }
  });
});
