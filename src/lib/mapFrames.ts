/**
 * Based on: glTF 2.0 specification, sections 3.9 (materials: normalTexture, textureInfo.texCoord)
 * and 3.8 (textures, images), and the KHR_texture_transform extension. The frames come from `solvePrimitive`, the same
 * solve `bake` runs, so a converted map matches the baked mesh.
 *
 * Which primitives a normal-map conversion covers, and their frames as `MapPart`s.
 */
import * as path from 'node:path';
import type { Asset, PrimitiveData } from '../mesh/asset.js';
import { toFloat32 } from '../mesh/decode.js';
import { TanframeError } from '../mesh/errors.js';
import type { FrameMethod } from '../mesh/types.js';
import { uvTransformOf } from '../mesh/uvTransform.js';
import type { FrameSet, MapPart, MapSpace } from '../imaging/convert.js';
import { solvePrimitive } from './bakeAsset.js';
import { createCompactScratch, type CompactScratch } from '../mesh/compact.js';
import { defaultProcessOptions } from './options.js';

/** A primitive named on the command line: mesh index or name, primitive index. */
export interface PrimitiveRef {
  mesh: string;
  primitive: number;
}

/** What the conversion needs from the mesh. */
export interface MapPartsRequest {
  /** File name of the map (only its base name is compared with the images' URIs and names). */
  imageName: string;
  from: MapSpace;
  to: MapSpace;
  fromMethod: FrameMethod;
  toMethod: FrameMethod;
  /** TEXCOORD set; null: the one the material's normal texture samples, else 0. */
  uv: number | null;
  /** Explicit primitives, or null for those whose material's normal texture is this image (else all). */
  primitives: PrimitiveRef[] | null;
}

/** One primitive taking part, for the summary. */
export interface MapPrimitiveInfo {
  mesh: number;
  meshName: string | null;
  primitive: number;
  uvSet: number;
  triangles: number;
  /** The material's normal-texture transform was applied to its UVs. */
  uvTransformed: boolean;
}

/** The parts to rasterise and how they were chosen. */
export interface MapParts {
  parts: MapPart[];
  primitives: MapPrimitiveInfo[];
  /** 'explicit' (--mesh-primitive), 'image' (the material's normal texture is this file) or 'all'. */
  selectedBy: 'explicit' | 'image' | 'all';
  /** Primitives passed over (no UVs, not triangles, ...), one line each. */
  skipped: string[];
}

/** The textureInfo of a material that samples a normal map through the tangent frame. */
function normalTextureInfos(json: any, material: number | null): any[] {
  if (material === null || material === undefined) return [];
  const m = json?.materials?.[material];
  if (!m || typeof m !== 'object') return [];
  const out: any[] = [];
  if (m.normalTexture && typeof m.normalTexture === 'object') out.push(m.normalTexture);
  const cc = m.extensions?.KHR_materials_clearcoat?.clearcoatNormalTexture;
  if (cc && typeof cc === 'object') out.push(cc);
  return out;
}

function imageOfTextureInfo(json: any, info: any): any {
  const tex = json?.textures?.[info?.index];
  const source = tex?.source;
  return Number.isInteger(source) ? json?.images?.[source] ?? null : null;
}

function sameImage(image: any, wanted: string): boolean {
  if (!image) return false;
  if (typeof image.uri === 'string' && !image.uri.startsWith('data:')) {
    let uri = image.uri;
    try { uri = decodeURIComponent(uri); } catch { /* keep as written */ }
    if (path.posix.basename(uri.replace(/\\/g, '/')) === wanted) return true;
  }
  if (typeof image.name === 'string') {
    const stem = wanted.slice(0, wanted.length - path.extname(wanted).length);
    if (image.name === wanted || image.name === stem) return true;
  }
  return false;
}

function texCoordOf(info: any): number {
  const override = info?.extensions?.KHR_texture_transform?.texCoord;
  if (Number.isInteger(override) && override >= 0) return override;
  const t = info?.texCoord;
  return Number.isInteger(t) && t >= 0 ? t : 0;
}

function parsePrimitiveRefs(asset: Asset, refs: PrimitiveRef[]): number[] {
  const meshes: any[] = Array.isArray(asset.json?.meshes) ? asset.json.meshes : [];
  const picked: number[] = [];
  for (const ref of refs) {
    let mesh = -1;
    if (/^\d+$/.test(ref.mesh)) mesh = Number(ref.mesh);
    else mesh = meshes.findIndex((m) => m?.name === ref.mesh);
    if (mesh < 0 || mesh >= meshes.length) {
      throw new TanframeError('usage', `--mesh-primitive ${ref.mesh}/${ref.primitive}: no such mesh (the file has ${meshes.length})`);
    }
    const i = asset.primitives.findIndex((p) => p.mesh === mesh && p.primitive === ref.primitive);
    if (i < 0) {
      const n = asset.primitives.filter((p) => p.mesh === mesh).length;
      throw new TanframeError('usage', `--mesh-primitive ${ref.mesh}/${ref.primitive}: mesh ${mesh} has ${n} primitive(s)`);
    }
    if (!picked.includes(i)) picked.push(i);
  }
  return picked;
}

/**
 * Frames of one primitive from the same solve as `bake` (normals kept, missing ones generated
 * flat; TEXCOORD set `uvSet`). Returns the frame set, or a skip reason when the primitive has
 * no position, no triangles or no such TEXCOORD set.
 */
export function primitiveFrameSet(
  asset: Asset, p: PrimitiveData, method: FrameMethod, uvSet: number, scratch: CompactScratch = createCompactScratch(),
): { frames: FrameSet | null; skipReason: string | null; triangles: number } {
  const options = defaultProcessOptions();
  options.method = method;
  options.uv = uvSet;
  options.allPrimitives = true;
  const solved = solvePrimitive(asset, p, options, false, scratch);
  const rep = solved.replacement;
  if (!rep) return { frames: null, skipReason: solved.report.skipReason ?? 'skipped', triangles: solved.report.triangles };
  const uvAttr = rep.attributes[`TEXCOORD_${uvSet}`];
  const nAttr = rep.attributes.NORMAL;
  const tAttr = rep.attributes.TANGENT;
  if (!uvAttr || !nAttr || !tAttr) return { frames: null, skipReason: 'no-texcoord', triangles: solved.report.triangles };
  const uvs = toFloat32(uvAttr);
  const rawN = toFloat32(nAttr);
  // Unit normals per vertex, as the solve used them.
  const normals = new Float32Array(rawN.length);
  for (let i = 0; i < rawN.length; i += 3) {
    const x = rawN[i], y = rawN[i + 1], z = rawN[i + 2];
    const l = Math.sqrt(x * x + y * y + z * z);
    if (l > 0 && Number.isFinite(l)) { normals[i] = x / l; normals[i + 1] = y / l; normals[i + 2] = z / l; }
  }
  return {
    frames: { uvs, normals, tangents: toFloat32(tAttr), indices: rep.indices },
    skipReason: null,
    triangles: rep.indices.length / 3,
  };
}

/**
 * Chooses the primitives a map conversion covers and computes their frames: the explicit
 * `primitives`, else those whose material's normal texture (or clearcoat normal texture) is
 * the image named `imageName` (by URI base name or image name), else every primitive.
 * Tangent-space input is decoded with `fromMethod` frames and tangent-space output encoded
 * with `toMethod` frames. The UV set is `uv`, else the matching texture's texCoord, else 0;
 * that texture's KHR_texture_transform is applied to the UVs. Throws TanframeError 'usage'
 * for a missing --mesh-primitive and 'unsupported-feature' when no primitive has the UVs.
 */
export function mapPartsForAsset(asset: Asset, req: MapPartsRequest): MapParts {
  const wanted = path.basename(req.imageName);
  let indices: number[];
  let selectedBy: MapParts['selectedBy'];
  if (req.primitives && req.primitives.length > 0) {
    indices = parsePrimitiveRefs(asset, req.primitives);
    selectedBy = 'explicit';
  } else {
    indices = [];
    for (let i = 0; i < asset.primitives.length; i++) {
      const infos = normalTextureInfos(asset.json, asset.primitives[i].material);
      if (infos.some((info) => sameImage(imageOfTextureInfo(asset.json, info), wanted))) indices.push(i);
    }
    selectedBy = indices.length > 0 ? 'image' : 'all';
    if (indices.length === 0) for (let i = 0; i < asset.primitives.length; i++) indices.push(i);
  }
  const parts: MapPart[] = [];
  const primitives: MapPrimitiveInfo[] = [];
  // One compaction scratch for all primitives (they may share one large vertex buffer).
  const scratch = createCompactScratch();
  const skipped: string[] = [];
  for (const i of indices) {
    const p = asset.primitives[i];
    const infos = normalTextureInfos(asset.json, p.material);
    const info = infos.find((x) => sameImage(imageOfTextureInfo(asset.json, x), wanted)) ?? infos[0] ?? null;
    const uvSet = req.uv ?? (info ? texCoordOf(info) : 0);
    const xf = info ? uvTransformOf(info) : null;
    const decode = req.from === 'tangent' ? primitiveFrameSet(asset, p, req.fromMethod, uvSet, scratch) : null;
    const encode = req.to !== 'tangent' ? null
      : decode && req.toMethod === req.fromMethod ? decode : primitiveFrameSet(asset, p, req.toMethod, uvSet, scratch);
    // Object -> object needs only the UV triangles.
    const geometry = decode ?? encode ?? primitiveFrameSet(asset, p, req.toMethod, uvSet, scratch);
    if (!geometry.frames || (decode && !decode.frames) || (encode && !encode.frames)) {
      skipped.push(`mesh ${p.mesh} primitive ${p.primitive}: ${(decode ?? encode ?? geometry).skipReason ?? 'skipped'}`);
      continue;
    }
    if (decode?.frames && encode?.frames && encode !== decode) checkSameTriangles(decode.frames, encode.frames);
    parts.push({ decode: decode?.frames ?? null, encode: encode?.frames ?? (decode ? null : geometry.frames), uvTransform: xf });
    primitives.push({ mesh: p.mesh, meshName: p.meshName, primitive: p.primitive, uvSet, triangles: geometry.triangles, uvTransformed: xf !== null });
  }
  if (parts.length === 0) {
    const why = skipped.length > 0 ? ` (${skipped.join('; ')})` : '';
    throw new TanframeError('unsupported-feature', `no primitive with triangles and texture coordinates to convert over${why}`);
  }
  return { parts, primitives, selectedBy, skipped };
}

/** Two solves of one primitive must list the same triangles with the same UVs (bit for bit). */
function checkSameTriangles(a: FrameSet, b: FrameSet): void {
  if (a.indices.length !== b.indices.length) throw new TanframeError('internal', 'the two frame solves disagree on the triangle count');
  for (let c = 0; c < a.indices.length; c++) {
    const ia = a.indices[c] * 2, ib = b.indices[c] * 2;
    if (a.uvs[ia] !== b.uvs[ib] || a.uvs[ia + 1] !== b.uvs[ib + 1]) {
      throw new TanframeError('internal', 'the two frame solves disagree on corner texture coordinates');
    }
  }
}
