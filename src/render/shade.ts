/**
 * Based on: DESIGN.md `render` (the three modes; shading c = albedo * (0.15 + 0.85 *
 * max(0, dot(n, l))) in linear space, then sRGB), METHODS.md's decoding convention (t, N and
 * sign interpolated without renormalising, b = sign * cross(N, t), normalise only the result),
 * glTF 2.0 sections 3.7.2.1 (TANGENT w: bitangent = cross(normal, tangent.xyz) * w), 3.9.3
 * (normalTexture: n = normalize((2 * sample - 1) * (scale, scale, 1))) and 3.9.6 (doubleSided:
 * back faces have their normals reversed before lighting), and Lambert's cosine law.
 *
 * World-space vertex data per instance, then one shading pass over the visible samples of a view.
 */
import { mat3, mat4 } from 'gl-matrix';
import { MODE_NAMES, type ModeName } from './names.js';
import { FINDING_KINDS, NEUTRAL_GREY, findingColour, mismatchColourLinear } from './palette.js';
import type { VisibilityBuffer } from './rasterize.js';
import { type RenderInstance, type RenderScene, defaultMaterial } from './scene.js';
import { sampleTexture, srgbToLinear } from './texture.js';

/** Picture modes (DESIGN.md). */
export { MODE_NAMES, type ModeName };

/** One instance's vertex data in world space (view independent). */
export interface PreparedInstance {
  /** World positions, 3 per vertex. */
  positions: Float64Array;
  /** Unit world normals, 3 per vertex (0 where the normal has no direction). */
  normals: Float32Array;
  /** World tangents, 4 per vertex: unit xyz, w times the sign of the transform's determinant; or null. */
  tangents: Float32Array | null;
  /** World reference tangents, 4 per corner, or null. */
  reference: Float32Array | null;
  /** Unit world face normals as wound, 3 per triangle (0 for no area). */
  faceNormals: Float32Array;
  /** -1 when the transform keeps orientation (counter-clockwise fronts), +1 when it mirrors (glTF 2.0, 3.7.4). */
  frontSign: number;
}

/** Transforms xyz triples by the 3 x 3 matrix m (column-major) and normalises each; zero stays zero. */
function transformDirections(out: Float32Array, src: Float32Array, stride: number, m: ArrayLike<number>, wSign: number): void {
  const n = src.length / stride;
  for (let i = 0; i < n; i++) {
    const o = i * stride;
    const x = src[o], y = src[o + 1], z = src[o + 2];
    const tx = m[0] * x + m[3] * y + m[6] * z, ty = m[1] * x + m[4] * y + m[7] * z, tz = m[2] * x + m[5] * y + m[8] * z;
    const l = Math.sqrt(tx * tx + ty * ty + tz * tz);
    if (l > 0 && l < Infinity) { out[o] = tx / l; out[o + 1] = ty / l; out[o + 2] = tz / l; }
    if (stride === 4) out[o + 3] = src[o + 3] * wSign;
  }
}

/**
 * World-space data of one instance: positions by the node matrix; normals by its inverse
 * transpose and tangents by its upper 3 x 3, each normalised per vertex as a vertex shader does
 * (common practice); a mirroring transform negates the tangents' w so that
 * b = w * cross(N, t) keeps pointing where the file's bitangent points.
 */
export function prepareInstance(scene: RenderScene, inst: RenderInstance): PreparedInstance {
  const p = scene.primitives[inst.primitive];
  const m = inst.matrix;
  const vc = p.positions.length / 3;
  const positions = new Float64Array(vc * 3);
  for (let i = 0; i < vc; i++) {
    const x = p.positions[i * 3], y = p.positions[i * 3 + 1], z = p.positions[i * 3 + 2];
    positions[i * 3] = m[0] * x + m[4] * y + m[8] * z + m[12];
    positions[i * 3 + 1] = m[1] * x + m[5] * y + m[9] * z + m[13];
    positions[i * 3 + 2] = m[2] * x + m[6] * y + m[10] * z + m[14];
  }
  const upper = new Float64Array(9) as unknown as mat3;
  mat3.fromMat4(upper, m as unknown as mat4);
  const det = mat3.determinant(upper);
  const normalM = new Float64Array(9) as unknown as mat3;
  if (!mat3.normalFromMat4(normalM, m as unknown as mat4)) mat3.identity(normalM);
  const wSign = det < 0 ? -1 : 1;
  const normals = new Float32Array(vc * 3);
  transformDirections(normals, p.normals, 3, normalM as unknown as Float64Array, 1);
  let tangents: Float32Array | null = null;
  if (p.tangents) {
    tangents = new Float32Array(p.tangents.length);
    transformDirections(tangents, p.tangents, 4, upper as unknown as Float64Array, wSign);
  }
  let reference: Float32Array | null = null;
  if (p.referenceTangents) {
    reference = new Float32Array(p.referenceTangents.length);
    transformDirections(reference, p.referenceTangents, 4, upper as unknown as Float64Array, wSign);
  }
  const tc = p.indices.length / 3;
  const faceNormals = new Float32Array(tc * 3);
  for (let t = 0; t < tc; t++) {
    const a = p.indices[t * 3] * 3, b = p.indices[t * 3 + 1] * 3, c = p.indices[t * 3 + 2] * 3;
    const e1x = positions[b] - positions[a], e1y = positions[b + 1] - positions[a + 1], e1z = positions[b + 2] - positions[a + 2];
    const e2x = positions[c] - positions[a], e2y = positions[c + 1] - positions[a + 1], e2z = positions[c + 2] - positions[a + 2];
    let fx = e1y * e2z - e1z * e2y, fy = e1z * e2x - e1x * e2z, fz = e1x * e2y - e1y * e2x;
    const l = Math.sqrt(fx * fx + fy * fy + fz * fz);
    // A mirroring transform turns the winding: the face normal of a front face flips with it.
    if (l > 0 && l < Infinity) { fx *= wSign / l; fy *= wSign / l; fz *= wSign / l; faceNormals[t * 3] = fx; faceNormals[t * 3 + 1] = fy; faceNormals[t * 3 + 2] = fz; }
  }
  return { positions, normals, tangents, reference, faceNormals, frontSign: det < 0 ? 1 : -1 };
}

/** Per-pixel outputs of one view: linear RGB per mode (3 per pixel, the covered samples' average) and covered samples per pixel. */
export interface ShadedView {
  /** Pixels per side. */
  size: number;
  colour: Float32Array[];
  /** Covered samples of each pixel, 0 .. ss * ss. */
  covered: Uint8Array;
}

/**
 * Shades the visible samples of `vis` (ss x ss samples per pixel) for each of `modes` and
 * resolves them to pixels. `light` is the unit direction toward the light in world space. As
 * multisampling does (common practice), a pixel's samples that show the same triangle are
 * shaded once, at their mean barycentrics, and weigh by their number; each pixel's colour is
 * the mean over its covered samples. Per shading point the corners' world data are
 * interpolated; see the file header for the formulas. A point whose normal has no direction
 * falls back to the face normal.
 */
export function shadeView(
  scene: RenderScene,
  prepared: PreparedInstance[],
  vis: VisibilityBuffer,
  ss: number,
  backFacing: Uint8Array[],
  modes: readonly ModeName[],
  light: [number, number, number],
): ShadedView {
  const side = vis.width, size = Math.floor(side / ss);
  const n = size * size;
  const wantShaded = modes.indexOf('shaded'), wantMismatch = modes.indexOf('mismatch'), wantFindings = modes.indexOf('findings');
  const colour = modes.map(() => new Float32Array(n * 3));
  const covered = new Uint8Array(n);
  const lx = light[0], ly = light[1], lz = light[2];
  const fallback = defaultMaterial();
  const tex = new Float64Array(3);
  const grey = srgbToLinear(NEUTRAL_GREY);
  const kindColours = FINDING_KINDS.map((k) => findingColour(k.bit).map(srgbToLinear));
  const heat = new Float64Array(3);
  const gInst = new Int32Array(ss * ss), gTri = new Int32Array(ss * ss), gCount = new Int32Array(ss * ss);
  const gB1 = new Float64Array(ss * ss), gB2 = new Float64Array(ss * ss);
  let lastInst = -1;
  let P: PreparedInstance = prepared[0];
  let idx: Uint32Array = new Uint32Array(0);
  let uvBase: Float32Array | null = null, uvNormal: Float32Array | null = null;
  let mat = fallback;
  let findings: Uint8Array | null = null;
  let back: Uint8Array = new Uint8Array(0);
  for (let o = 0; o < n; o++) {
    const py = (o / size) | 0, px = o - py * size;
    let groups = 0, cov = 0;
    for (let sy = 0; sy < ss; sy++) {
      for (let sx = 0; sx < ss; sx++) {
        const s = (py * ss + sy) * side + px * ss + sx;
        const si = vis.instance[s];
        if (si < 0) continue;
        cov++;
        const st = vis.triangle[s];
        let g = 0;
        while (g < groups && (gInst[g] !== si || gTri[g] !== st)) g++;
        if (g === groups) { gInst[g] = si; gTri[g] = st; gCount[g] = 0; gB1[g] = 0; gB2[g] = 0; groups++; }
        gCount[g]++;
        gB1[g] += vis.b1[s];
        gB2[g] += vis.b2[s];
      }
    }
    covered[o] = cov;
    for (let g = 0; g < groups; g++) {
    const inst = gInst[g];
    const wgt = gCount[g] / cov;
    if (inst !== lastInst) {
      lastInst = inst;
      P = prepared[inst];
      const prim = scene.primitives[scene.instances[inst].primitive];
      idx = prim.indices;
      mat = prim.material >= 0 ? scene.materials[prim.material] : fallback;
      uvBase = mat.baseColorTexture ? prim.uvs[mat.baseColorTexture.texCoord] ?? null : null;
      uvNormal = mat.normalTexture ? prim.uvs[mat.normalTexture.texCoord] ?? null : null;
      findings = prim.findings;
      back = backFacing[inst];
    }
    const t = gTri[g];
    const b1 = gB1[g] / gCount[g], b2 = gB2[g] / gCount[g], b0 = 1 - b1 - b2;
    const ia = idx[t * 3], ib = idx[t * 3 + 1], ic = idx[t * 3 + 2];
    const flip = back[t] ? -1 : 1;
    const fnx = P.faceNormals[t * 3] * flip, fny = P.faceNormals[t * 3 + 1] * flip, fnz = P.faceNormals[t * 3 + 2] * flip;
    const Nv = P.normals;
    const Nx = b0 * Nv[ia * 3] + b1 * Nv[ib * 3] + b2 * Nv[ic * 3];
    const Ny = b0 * Nv[ia * 3 + 1] + b1 * Nv[ib * 3 + 1] + b2 * Nv[ic * 3 + 1];
    const Nz = b0 * Nv[ia * 3 + 2] + b1 * Nv[ib * 3 + 2] + b2 * Nv[ic * 3 + 2];
    // The map's tangent-space normal, or none.
    let mx = 0, my = 0, mz = 1, mapped = false;
    if (uvNormal && P.tangents && mat.normalTexture && (wantShaded >= 0 || wantMismatch >= 0)) {
      const u = b0 * uvNormal[ia * 2] + b1 * uvNormal[ib * 2] + b2 * uvNormal[ic * 2];
      const v = b0 * uvNormal[ia * 2 + 1] + b1 * uvNormal[ib * 2 + 1] + b2 * uvNormal[ic * 2 + 1];
      sampleTexture(tex, scene.images[mat.normalTexture.image], mat.normalTexture, u, v, false);
      mx = (tex[0] * 2 - 1) * mat.normalScale;
      my = (tex[1] * 2 - 1) * mat.normalScale;
      mz = tex[2] * 2 - 1;
      mapped = true;
    }
    // n = normalize(x * t + y * b + z * N) with b = w * cross(N, t), for tangents T (4 per item) at items a, b, c.
    let nx = Nx, ny = Ny, nz = Nz;
    if (mapped) {
      const T = P.tangents as Float32Array;
      const tx = b0 * T[ia * 4] + b1 * T[ib * 4] + b2 * T[ic * 4];
      const ty = b0 * T[ia * 4 + 1] + b1 * T[ib * 4 + 1] + b2 * T[ic * 4 + 1];
      const tz = b0 * T[ia * 4 + 2] + b1 * T[ib * 4 + 2] + b2 * T[ic * 4 + 2];
      const w = b0 * T[ia * 4 + 3] + b1 * T[ib * 4 + 3] + b2 * T[ic * 4 + 3];
      const bx = w * (Ny * tz - Nz * ty), by = w * (Nz * tx - Nx * tz), bz = w * (Nx * ty - Ny * tx);
      nx = mx * tx + my * bx + mz * Nx;
      ny = mx * ty + my * by + mz * Ny;
      nz = mx * tz + my * bz + mz * Nz;
    }
    let len = Math.sqrt(nx * nx + ny * ny + nz * nz);
    if (len > 0 && len < Infinity) { nx = (nx / len) * flip; ny = (ny / len) * flip; nz = (nz / len) * flip; }
    else { nx = fnx; ny = fny; nz = fnz; }
    const ndl = nx * lx + ny * ly + nz * lz;
    const geomLight = fnx * lx + fny * ly + fnz * lz;
    const shape = 0.45 + 0.55 * (geomLight > 0 ? geomLight : 0);
    if (wantShaded >= 0) {
      let ar = mat.baseColor[0], ag = mat.baseColor[1], ab = mat.baseColor[2];
      if (uvBase && mat.baseColorTexture) {
        const u = b0 * uvBase[ia * 2] + b1 * uvBase[ib * 2] + b2 * uvBase[ic * 2];
        const v = b0 * uvBase[ia * 2 + 1] + b1 * uvBase[ib * 2 + 1] + b2 * uvBase[ic * 2 + 1];
        sampleTexture(tex, scene.images[mat.baseColorTexture.image], mat.baseColorTexture, u, v, true);
        ar *= tex[0]; ag *= tex[1]; ab *= tex[2];
      }
      const k = 0.15 + 0.85 * (ndl > 0 ? ndl : 0);
      const out = colour[wantShaded];
      out[o * 3] += ar * k * wgt; out[o * 3 + 1] += ag * k * wgt; out[o * 3 + 2] += ab * k * wgt;
    }
    if (wantMismatch >= 0) {
      let angle = 0;
      const R = P.reference;
      if (mapped && R) {
        const c = t * 3;
        const tx = b0 * R[c * 4] + b1 * R[c * 4 + 4] + b2 * R[c * 4 + 8];
        const ty = b0 * R[c * 4 + 1] + b1 * R[c * 4 + 5] + b2 * R[c * 4 + 9];
        const tz = b0 * R[c * 4 + 2] + b1 * R[c * 4 + 6] + b2 * R[c * 4 + 10];
        const w = b0 * R[c * 4 + 3] + b1 * R[c * 4 + 7] + b2 * R[c * 4 + 11];
        const bx = w * (Ny * tz - Nz * ty), by = w * (Nz * tx - Nx * tz), bz = w * (Nx * ty - Ny * tx);
        let rx = mx * tx + my * bx + mz * Nx, ry = mx * ty + my * by + mz * Ny, rz = mx * tz + my * bz + mz * Nz;
        len = Math.sqrt(rx * rx + ry * ry + rz * rz);
        if (len > 0 && len < Infinity) {
          rx = (rx / len) * flip; ry = (ry / len) * flip; rz = (rz / len) * flip;
          const cx = ny * rz - nz * ry, cy = nz * rx - nx * rz, cz = nx * ry - ny * rx;
          angle = (Math.atan2(Math.sqrt(cx * cx + cy * cy + cz * cz), nx * rx + ny * ry + nz * rz) * 180) / Math.PI;
        }
      }
      mismatchColourLinear(heat, angle);
      const out = colour[wantMismatch];
      const sw = shape * wgt;
      out[o * 3] += heat[0] * sw; out[o * 3 + 1] += heat[1] * sw; out[o * 3 + 2] += heat[2] * sw;
    }
    if (wantFindings >= 0) {
      const out = colour[wantFindings];
      const bits = findings ? findings[t] : 0;
      let cr = grey, cg = grey, cb = grey;
      if (bits) {
        for (let k = 0; k < FINDING_KINDS.length; k++) {
          if (bits & FINDING_KINDS[k].bit) { cr = kindColours[k][0]; cg = kindColours[k][1]; cb = kindColours[k][2]; break; }
        }
      }
      const sw = shape * wgt;
      out[o * 3] += cr * sw; out[o * 3 + 1] += cg * sw; out[o * 3 + 2] += cb * sw;
    }
    }
  }
  return { size, colour, covered };
}
