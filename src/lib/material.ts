/**
 * Based on: glTF 2.0 specification, section 3.9 (materials: normalTexture and texCoord), and
 * the KHR_texture_transform, KHR_materials_clearcoat and KHR_materials_anisotropy extensions.
 */

import { uvTransformOf, type UvTransform } from '../mesh/uvTransform.js';

/** Which texture-coordinate set a material's tangent frames derive from, if any. */
export interface TangentNeed {
  /** The material samples a map that is read through the tangent frame. */
  needsTangents: boolean;
  /** The TEXCOORD set of that map (KHR_texture_transform's texCoord override applied). */
  texCoord: number;
  /** That map's KHR_texture_transform (null when none or the identity). */
  transform: UvTransform | null;
}

/** The TEXCOORD set a textureInfo samples: KHR_texture_transform's texCoord override, else texCoord, else 0. */
export function texCoordOf(info: any): number {
  const override = info?.extensions?.KHR_texture_transform?.texCoord;
  if (Number.isInteger(override) && override >= 0) return override;
  const t = info?.texCoord;
  return Number.isInteger(t) && t >= 0 ? t : 0;
}

/**
 * Tells whether material `index` of `json` needs tangents (a normal texture, a clearcoat
 * normal texture, or anisotropy), which UV set its map uses and the map's texture transform.
 * A missing material needs none.
 */
export function tangentNeedOf(json: any, index: number | null): TangentNeed {
  const none: TangentNeed = { needsTangents: false, texCoord: 0, transform: null };
  if (index === null || index === undefined) return none;
  const m = json?.materials?.[index];
  if (!m || typeof m !== 'object') return none;
  const from = (info: any): TangentNeed => ({ needsTangents: true, texCoord: texCoordOf(info), transform: uvTransformOf(info) });
  if (m.normalTexture && typeof m.normalTexture === 'object') return from(m.normalTexture);
  const clearcoat = m.extensions?.KHR_materials_clearcoat?.clearcoatNormalTexture;
  if (clearcoat && typeof clearcoat === 'object') return from(clearcoat);
  const aniso = m.extensions?.KHR_materials_anisotropy;
  if (aniso && typeof aniso === 'object') {
    return aniso.anisotropyTexture && typeof aniso.anisotropyTexture === 'object' ? from(aniso.anisotropyTexture) : { needsTangents: true, texCoord: 0, transform: null };
  }
  return none;
}
