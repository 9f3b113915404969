/**
 * Based on: glTF 2.0 specification, section 3.9 (materials: normalTexture and texCoord), and
 * the KHR_texture_transform, KHR_materials_clearcoat and KHR_materials_anisotropy extensions.
 */

/** Which texture-coordinate set a material's tangent frames derive from, if any. */
export interface TangentNeed {
  /** The material samples a map that is read through the tangent frame. */
  needsTangents: boolean;
  /** The TEXCOORD set of that map (KHR_texture_transform's texCoord override applied). */
  texCoord: number;
}

function texCoordOf(info: any): number {
  const override = info?.extensions?.KHR_texture_transform?.texCoord;
  if (Number.isInteger(override) && override >= 0) return override;
  const t = info?.texCoord;
  return Number.isInteger(t) && t >= 0 ? t : 0;
}

/**
 * Tells whether material `index` of `json` needs tangents (a normal texture, a clearcoat
 * normal texture, or anisotropy) and which UV set its normal map uses. A missing material
 * needs none.
 */
export function tangentNeedOf(json: any, index: number | null): TangentNeed {
  if (index === null || index === undefined) return { needsTangents: false, texCoord: 0 };
  const m = json?.materials?.[index];
  if (!m || typeof m !== 'object') return { needsTangents: false, texCoord: 0 };
  if (m.normalTexture && typeof m.normalTexture === 'object') {
    return { needsTangents: true, texCoord: texCoordOf(m.normalTexture) };
  }
  const clearcoat = m.extensions?.KHR_materials_clearcoat?.clearcoatNormalTexture;
  if (clearcoat && typeof clearcoat === 'object') return { needsTangents: true, texCoord: texCoordOf(clearcoat) };
  const aniso = m.extensions?.KHR_materials_anisotropy;
  if (aniso && typeof aniso === 'object') {
    return { needsTangents: true, texCoord: aniso.anisotropyTexture ? texCoordOf(aniso.anisotropyTexture) : 0 };
  }
  return { needsTangents: false, texCoord: 0 };
}
