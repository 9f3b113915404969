/**
 * Small assets for the renderer's tests: glTF primitives with a material whose base colour
 * factor and uniform normal map are given, read back through the library, rendered to RGBA.
 * Images are written by the independent test PNG writer (test/imaging/pngBytes.ts).
 */
import { readAssetBytes } from '../../src/lib/processFile.js';
import { buildRenderScene, defaultRenderOptions, type RenderAssetOptions } from '../../src/lib/renderAsset.js';
import { renderSheet, type RenderedSheet } from '../../src/render/index.js';
import { buildGltf, glbBytes, type BuildPrimitive } from './gltfBuilder.js';
import { encodePngRgba8 } from './png.js';

/** A data: URI of a w x h PNG filled with one RGBA8 colour. */
export function uniformPngUri(rgba: [number, number, number, number], w = 4, h = 4): string {
  const data = new Uint8Array(w * h * 4);
  for (let i = 0; i < w * h; i++) data.set(rgba, i * 4);
  return `data:image/png;base64,${Buffer.from(encodePngRgba8(w, h, data)).toString('base64')}`;
}

/** 8-bit encoding of a unit tangent-space normal: c = round((x * 0.5 + 0.5) * 255) (METHODS.md). */
export function encodeNormal(n: [number, number, number]): [number, number, number, number] {
  const l = Math.hypot(n[0], n[1], n[2]);
  return [0, 1, 2].map((k) => Math.round(((n[k] / l) * 0.5 + 0.5) * 255)).concat(255) as [number, number, number, number];
}

/** What the material holds. */
export interface TestMaterial {
  /** Linear base colour factor (alpha 1). */
  baseColor?: [number, number, number];
  /** RGB of a uniform normal map (texel values), or null for none. */
  normalTexel?: [number, number, number] | null;
  doubleSided?: boolean;
}

/** GLB bytes of one mesh of `primitives` (material 0 = `material`) under one node with `node` (TRS or matrix). */
export function materialGlb(primitives: BuildPrimitive[], material: TestMaterial, node: Record<string, unknown> = {}): Uint8Array {
  const { json, bin } = buildGltf(primitives);
  const m: any = { pbrMetallicRoughness: {} };
  if (material.baseColor) m.pbrMetallicRoughness.baseColorFactor = [...material.baseColor, 1];
  if (material.doubleSided) m.doubleSided = true;
  if (material.normalTexel !== null) {
    const texel = material.normalTexel ?? [128, 128, 255];
    json.images = [{ uri: uniformPngUri([texel[0], texel[1], texel[2], 255]) }];
    json.textures = [{ source: 0 }];
    m.normalTexture = { index: 0 };
  }
  json.materials = [m];
  if (json.nodes?.[0]) Object.assign(json.nodes[0], node);
  else {
    json.nodes = [{ mesh: 0, ...node }];
    json.scenes = [{ nodes: [0] }];
    json.scene = 0;
  }
  return glbBytes(json, bin);
}

/** Reads `bytes` as `name` and renders it (defaults of DESIGN.md, then `options`). */
export async function renderBytes(bytes: Uint8Array, name: string, options: Partial<RenderAssetOptions>, resources?: Record<string, Uint8Array>): Promise<RenderedSheet> {
  const asset = await readAssetBytes(bytes, name, resources);
  const o = { ...defaultRenderOptions(), ...options };
  const built = await buildRenderScene(asset, o);
  return renderSheet(built.scene, { views: o.views, modes: o.modes, size: o.size, light: o.light, labels: built.labels });
}

/** The RGBA of pixel (x, y). */
export function pixel(s: RenderedSheet, x: number, y: number): number[] {
  const o = (y * s.width + x) * 4;
  return [s.rgba[o], s.rgba[o + 1], s.rgba[o + 2], s.rgba[o + 3]];
}

/** The sRGB transfer function (IEC 61966-2-1), written here independently of src/render. */
export function srgb(c: number): number {
  const x = Math.min(1, Math.max(0, c));
  return x <= 0.0031308 ? 12.92 * x : 1.055 * Math.pow(x, 1 / 2.4) - 0.055;
}
