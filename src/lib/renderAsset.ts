/**
 * Based on: glTF 2.0 specification, sections 3.5 (scenes and nodes), 3.8 (textures, images,
 * samplers), 3.9 (materials) and the KHR_texture_transform extension; DESIGN.md `render`.
 *
 * The library step behind `render` and `--views`: builds the renderer's scene from a read
 * asset, with the frames of `solvePrimitive` (the same solve as `bake`) and its per-triangle
 * findings, decodes PNG and JPEG textures, and encodes the sheet as PNG.
 */
import type { Asset, PrimitiveData } from '../mesh/asset.js';
import { toFloat32 } from '../mesh/decode.js';
import { generateNormals } from '../mesh/normals.js';
import { expandToTriangleList, isTriangleMode } from '../mesh/triangulate.js';
import type { FrameMethod } from '../mesh/types.js';
import { uvTransformMatrix, uvTransformOf } from '../mesh/uvTransform.js';
import { createCompactScratch } from '../mesh/compact.js';
import { resolveResourceUri } from '../io/uri.js';
import { decodePng, detectImageKind, encodePng } from '../imaging/png.js';
import {
  WRAP_REPEAT, defaultMaterial, nodeMatrix, renderSheet,
  type ModeName, type RenderImage, type RenderMaterial, type RenderPrimitive, type RenderScene, type RenderTextureRef, type ViewName,
} from '../render/index.js';
import { solvePrimitive } from './bakeAsset.js';
import type { RenderAssetOptions } from './renderOptions.js';
import { texCoordOf } from './material.js';
import { defaultProcessOptions, type ProcessOptions } from './options.js';

export { defaultRenderOptions, type RenderAssetOptions } from './renderOptions.js';

/** A scene ready to render, with the legend lines and notes for the user. */
export interface BuiltScene {
  scene: RenderScene;
  /** Legend lines per mode (which frames are drawn and compared). */
  labels: Partial<Record<ModeName, string[]>>;
  /** One line each: what could not be drawn as the file asks (an image format, a primitive mode). */
  notes: string[];
}

/** Most texels of one decoded texture (4096 x 4096); larger images fall back to the factor. Our choice: 128 MB of samples. */
export const MAX_RENDER_TEXELS = 4096 * 4096;

/** The bytes of json.images[i], or null (missing or not found). */
function imageBytes(asset: Asset, i: number): Uint8Array | null {
  const img = asset.json.images?.[i];
  if (!img || typeof img !== 'object') return null;
  if (Number.isInteger(img.bufferView)) {
    const view = asset.json.bufferViews?.[img.bufferView];
    const buf = view ? asset.buffers[view.buffer] : undefined;
    if (!buf) return null;
    const start = view.byteOffset ?? 0;
    return start + view.byteLength <= buf.length ? buf.subarray(start, start + view.byteLength) : null;
  }
  if (typeof img.uri === 'string') {
    if (/^data:/i.test(img.uri)) {
      try {
        const r = resolveResourceUri(img.uri, '.');
        return r.kind === 'data' ? r.bytes : null;
      } catch {
        return null;
      }
    }
    return asset.externalImages.find((e) => e.image === i)?.bytes ?? null;
  }
  return null;
}

/** Decodes PNG or JPEG bytes to RGBA 16-bit samples; throws on anything else or a damaged file. */
async function decodeImage(bytes: Uint8Array): Promise<RenderImage> {
  const kind = detectImageKind(bytes);
  if (kind === 'jpeg') {
    const jpeg = (await import('jpeg-js')).default;
    const d = jpeg.decode(bytes, { useTArray: true, formatAsRGBA: true, maxResolutionInMP: MAX_RENDER_TEXELS / 1e6, maxMemoryUsageInMB: 512 });
    const n = d.width * d.height;
    const data = new Uint16Array(n * 4);
    for (let i = 0; i < n * 4; i++) data[i] = d.data[i] * 257;
    return { width: d.width, height: d.height, data };
  }
  const png = decodePng(bytes);
  const n = png.width * png.height;
  if (n > MAX_RENDER_TEXELS) throw new Error(`${png.width} x ${png.height} texels is more than the renderer takes`);
  const data = new Uint16Array(n * 4);
  const k = png.depth === 16 ? 1 : 257, ch = png.channels, src = png.data;
  for (let i = 0; i < n; i++) {
    const o = i * ch;
    const r = src[o] * k;
    if (ch <= 2) { data[i * 4] = data[i * 4 + 1] = data[i * 4 + 2] = r; data[i * 4 + 3] = ch === 2 ? src[o + 1] * k : 65535; }
    else { data[i * 4] = r; data[i * 4 + 1] = src[o + 1] * k; data[i * 4 + 2] = src[o + 2] * k; data[i * 4 + 3] = ch === 4 ? src[o + 3] * k : 65535; }
  }
  return { width: png.width, height: png.height, data };
}

/** Names a texture's image kind for a note. */
function kindName(bytes: Uint8Array | null): string {
  if (!bytes) return 'missing';
  const k = detectImageKind(bytes);
  return k === 'unknown' ? 'unknown format' : k.toUpperCase();
}

/** Collects the materials and textures of the asset. */
async function buildMaterials(asset: Asset, notes: string[]): Promise<{ materials: RenderMaterial[]; images: RenderImage[] }> {
  const json = asset.json;
  const images: RenderImage[] = [];
  const decoded = new Map<number, number | null>();
  const textureRef = async (info: any, role: string): Promise<RenderTextureRef | null> => {
    if (!info || typeof info !== 'object' || !Number.isInteger(info.index)) return null;
    const tex = json.textures?.[info.index];
    const source = tex?.source;
    if (!Number.isInteger(source)) {
      notes.push(`texture ${info.index} (${role}) has no PNG or JPEG source; drawn without it`);
      return null;
    }
    if (!decoded.has(source)) {
      const bytes = imageBytes(asset, source);
      try {
        if (!bytes) throw new Error('missing');
        const img = await decodeImage(bytes);
        decoded.set(source, images.length);
        images.push(img);
      } catch (err) {
        decoded.set(source, null);
        const kind = kindName(bytes);
        const why = !bytes ? 'was not found'
          : kind === 'PNG' || kind === 'JPEG' ? `cannot be decoded (${String((err as Error)?.message ?? err).split('\n')[0]})`
          : `is ${kind}, not PNG or JPEG`;
        notes.push(`image ${source} (${role}) ${why}; drawn without it`);
      }
    }
    const image = decoded.get(source);
    if (image === null || image === undefined) return null;
    const sampler = Number.isInteger(tex.sampler) ? json.samplers?.[tex.sampler] : undefined;
    const t = uvTransformOf(info);
    return {
      image,
      texCoord: texCoordOf(info),
      wrapS: Number.isInteger(sampler?.wrapS) ? sampler.wrapS : WRAP_REPEAT,
      wrapT: Number.isInteger(sampler?.wrapT) ? sampler.wrapT : WRAP_REPEAT,
      transform: t ? uvTransformMatrix(t) : null,
    };
  };
  const materials: RenderMaterial[] = [];
  const list: any[] = Array.isArray(json.materials) ? json.materials : [];
  for (const m of list) {
    const out = defaultMaterial();
    const pbr = m?.pbrMetallicRoughness;
    const f = pbr?.baseColorFactor;
    out.baseColorTexture = await textureRef(pbr?.baseColorTexture, 'base colour');
    if (Array.isArray(f) && f.length === 4 && f.every((x: unknown) => typeof x === 'number' && Number.isFinite(x))) out.baseColor = [f[0], f[1], f[2]];
    else if (out.baseColorTexture) out.baseColor = [1, 1, 1];
    out.normalTexture = await textureRef(m?.normalTexture, 'normal');
    const s = m?.normalTexture?.scale;
    out.normalScale = typeof s === 'number' && Number.isFinite(s) ? s : 1;
    out.doubleSided = m?.doubleSided === true;
    materials.push(out);
  }
  return { materials, images };
}

/** Per corner of `indices`, the 4 floats of tangents[indices[c]]. */
function perCorner(tangents: Float32Array, indices: Uint32Array): Float32Array {
  const out = new Float32Array(indices.length * 4);
  for (let c = 0; c < indices.length; c++) out.set(tangents.subarray(indices[c] * 4, indices[c] * 4 + 4), c * 4);
  return out;
}

function uvSets(attributes: Record<string, { array: any }>, get: (name: string) => Float32Array | null): (Float32Array | null)[] {
  const out: (Float32Array | null)[] = [];
  for (let n = 0; n < 8; n++) out.push(attributes[`TEXCOORD_${n}`] ? get(`TEXCOORD_${n}`) : null);
  return out;
}

/** A primitive that takes no part in the solve, drawn as stored: triangle list, flat normals when it has none. */
function plainPrimitive(p: PrimitiveData): RenderPrimitive | null {
  const pos = p.attributes.POSITION;
  if (!pos || !isTriangleMode(p.mode)) return null;
  let positions = toFloat32(pos);
  const vc = positions.length / 3;
  let indices = expandToTriangleList(p.mode, p.indices, vc);
  let uvs = uvSets(p.attributes, (name) => toFloat32(p.attributes[name]));
  let normals: Float32Array;
  if (p.attributes.NORMAL) normals = toFloat32(p.attributes.NORMAL);
  else {
    const g = generateNormals(indices, positions, indices.length / 3, vc, 'flat', 0);
    const gather = (src: Float32Array, k: number) => {
      const out = new Float32Array(g.sourceVertex.length * k);
      for (let i = 0; i < g.sourceVertex.length; i++) for (let j = 0; j < k; j++) out[i * k + j] = src[g.sourceVertex[i] * k + j];
      return out;
    };
    positions = gather(positions, 3);
    uvs = uvs.map((u) => (u ? gather(u, 2) : null));
    normals = g.normals;
    indices = g.indices;
  }
  return { positions, normals, uvs, tangents: null, referenceTangents: null, indices, findings: null, material: p.material ?? -1 };
}

/**
 * Most node visits while walking the scene: glTF nodes form a tree (each node at most one
 * parent, glTF 2.0, 3.5.3), but a file may break that and reach one node by many paths, which
 * would cost exponential time; the walk stops there. Our choice.
 */
export const MAX_NODE_VISITS = 100_000;

/** Most triangles drawn over all instances (a mesh placed by many nodes counts each time); the same figure as the read limit's default. */
export const MAX_RENDER_TRIANGLES = 20_000_000;

/**
 * The nodes of the asset's scene (json.scene, else scene 0, else every root node), each with
 * its global matrix, depth first; at most MAX_NODE_VISITS visits (`truncated` then says so).
 */
function sceneNodes(json: any): { nodes: { mesh: number; matrix: Float64Array }[]; truncated: boolean } {
  const nodes: any[] = Array.isArray(json.nodes) ? json.nodes : [];
  const out: { mesh: number; matrix: Float64Array }[] = [];
  let roots: number[];
  const scenes: any[] = Array.isArray(json.scenes) ? json.scenes : [];
  const chosen = scenes[Number.isInteger(json.scene) ? json.scene : 0];
  if (chosen && Array.isArray(chosen.nodes)) roots = chosen.nodes.filter((n: unknown) => Number.isInteger(n));
  else {
    const child = new Set<number>();
    for (const n of nodes) for (const c of Array.isArray(n?.children) ? n.children : []) child.add(c);
    roots = nodes.map((_, i) => i).filter((i) => !child.has(i));
  }
  const visiting = new Set<number>();
  let visits = 0, truncated = false;
  const visit = (i: number, parent: Float64Array) => {
    const n = nodes[i];
    if (!n || visiting.has(i)) return;
    if (++visits > MAX_NODE_VISITS) { truncated = true; return; }
    visiting.add(i);
    const local = nodeMatrix(n);
    const m = new Float64Array(16);
    for (let c = 0; c < 4; c++) for (let r = 0; r < 4; r++) {
      let s = 0;
      for (let k = 0; k < 4; k++) s += parent[k * 4 + r] * local[c * 4 + k];
      m[c * 4 + r] = s;
    }
    if (Number.isInteger(n.mesh)) out.push({ mesh: n.mesh, matrix: m });
    for (const c of Array.isArray(n.children) ? n.children : []) if (Number.isInteger(c)) visit(c, m);
    visiting.delete(i);
  };
  const identity = new Float64Array([1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1]);
  for (const r of roots) visit(r, identity);
  if (out.length === 0 && nodes.length === 0) {
    const meshes: any[] = Array.isArray(json.meshes) ? json.meshes : [];
    meshes.forEach((_, i) => out.push({ mesh: i, matrix: identity }));
  }
  return { nodes: out, truncated };
}

/**
 * Builds the scene `render` draws from a read asset. Each primitive the solve takes part in is
 * drawn with its baked geometry and frames (solvePrimitive, as `bake` writes them) and its
 * per-triangle findings; its mismatch reference is the file's stored TANGENT, or, without one,
 * the frames of the other method. Other triangle primitives are drawn as stored, without
 * normal mapping; points and lines are not drawn. Skins and morph weights are not applied
 * (the mesh is drawn as stored, node transforms only).
 */
export async function buildRenderScene(asset: Asset, options: RenderAssetOptions): Promise<BuiltScene> {
  const notes: string[] = [];
  const po: ProcessOptions = { ...defaultProcessOptions(), method: options.method, uv: options.uv };
  const other: FrameMethod = options.method === 'mikktspace' ? 'lengyel' : 'mikktspace';
  const wantReference = options.modes.includes('mismatch');
  const { materials, images } = await buildMaterials(asset, notes);
  const scratch = createCompactScratch();
  const primitives: RenderPrimitive[] = [];
  const slot = new Map<string, number>(); // "mesh/primitive" -> index in primitives
  let stored = 0, recomputed = 0, notDrawn = 0;
  for (const p of asset.primitives) {
    const r = solvePrimitive(asset, p, po, false, scratch, true);
    let prim: RenderPrimitive | null;
    if (r.replacement && r.surface) {
      const a = r.replacement.attributes;
      const get = (name: string) => (a[name] ? toFloat32(a[name]) : null);
      const indices = r.replacement.indices;
      let reference: Float32Array | null = null;
      if (r.surface.storedTangents) {
        reference = perCorner(r.surface.storedTangents, indices);
        stored++;
      } else if (wantReference) {
        const o = solvePrimitive(asset, p, { ...po, method: other }, false, scratch, false);
        if (o.replacement && o.replacement.indices.length === indices.length) {
          reference = perCorner(toFloat32(o.replacement.attributes.TANGENT), o.replacement.indices);
          recomputed++;
        }
      }
      prim = {
        positions: get('POSITION') as Float32Array, normals: get('NORMAL') as Float32Array, uvs: uvSets(a, get),
        tangents: get('TANGENT'), referenceTangents: reference, indices, findings: r.surface.findings, material: p.material ?? -1,
      };
    } else {
      prim = plainPrimitive(p);
    }
    if (!prim) { notDrawn++; continue; }
    if (prim.material >= materials.length) prim.material = -1;
    slot.set(`${p.mesh}/${p.primitive}`, primitives.length);
    primitives.push(prim);
  }
  if (notDrawn > 0) notes.push(`${notDrawn} primitive${notDrawn === 1 ? '' : 's'} without triangles (points or lines) not drawn`);
  const instances: RenderScene['instances'] = [];
  const walk = sceneNodes(asset.json);
  if (walk.truncated) notes.push(`the node hierarchy reaches nodes by more than ${MAX_NODE_VISITS.toLocaleString('en-US')} paths (glTF nodes form a tree); the rest is not drawn`);
  let drawnTriangles = 0, skippedInstances = 0;
  for (const node of walk.nodes) {
    const mesh = asset.json.meshes?.[node.mesh];
    const count = Array.isArray(mesh?.primitives) ? mesh.primitives.length : 0;
    for (let k = 0; k < count; k++) {
      const s = slot.get(`${node.mesh}/${k}`);
      if (s === undefined) continue;
      const tris = primitives[s].indices.length / 3;
      if (drawnTriangles + tris > MAX_RENDER_TRIANGLES) { skippedInstances++; continue; }
      drawnTriangles += tris;
      instances.push({ primitive: s, matrix: node.matrix });
    }
  }
  if (skippedInstances > 0) notes.push(`${skippedInstances} placed primitive${skippedInstances === 1 ? '' : 's'} past ${MAX_RENDER_TRIANGLES.toLocaleString('en-US')} drawn triangles not drawn`);
  const labels: BuiltScene['labels'] = { shaded: [`${options.method} frames`] };
  if (stored > 0 && recomputed === 0) labels.mismatch = [`stored vs ${options.method}`];
  else if (stored === 0 && recomputed > 0) labels.mismatch = [`${other} vs ${options.method}`, '(no stored tangents)'];
  else if (stored > 0) labels.mismatch = [`stored (else ${other})`, `vs ${options.method}`];
  else labels.mismatch = ['nothing to compare'];
  if (wantReference && recomputed > 0) {
    notes.push(`mismatch: ${recomputed} primitive${recomputed === 1 ? ' has' : 's have'} no stored tangents; compared with ${other} frames instead`);
  }
  return { scene: { primitives, instances, materials, images }, labels, notes };
}

/** The rendered sheet as PNG bytes (RGBA, 8 bits), with its size and the notes of buildRenderScene. */
export interface RenderedAsset {
  png: Uint8Array;
  width: number;
  height: number;
  notes: string[];
}

/** Renders `asset` into one PNG sheet (DESIGN.md `render`): a pure function of the asset and the options. */
export async function renderAssetPng(asset: Asset, options: RenderAssetOptions): Promise<RenderedAsset> {
  const built = await buildRenderScene(asset, options);
  const sheet = renderSheet(built.scene, { views: options.views, modes: options.modes, size: options.size, light: options.light, labels: built.labels });
  const png = encodePng({ width: sheet.width, height: sheet.height, channels: 4, depth: 8, data: sheet.rgba });
  return { png, width: sheet.width, height: sheet.height, notes: built.notes };
}
