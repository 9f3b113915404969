/**
 * Which accessor formats each vertex-attribute semantic may use.
 * Based on: glTF 2.0 specification, 3.7.2.1 (mesh attribute table) and 3.7.2.2 (morph target
 * table); KHR_mesh_quantization extension, "Extending Mesh Attributes" and "Extending Morph
 * Target Attributes" tables.
 */
import { BYTE, FLOAT, SHORT, UNSIGNED_BYTE, UNSIGNED_SHORT, UNSIGNED_INT } from '../mesh/asset.js';

/** A component type plus whether it is normalized, e.g. [BYTE, true] = "byte normalized". */
type Format = readonly [componentType: number, normalized: boolean];

interface Rule {
  types: readonly string[];
  formats: readonly Format[];
}

const F: Format = [FLOAT, false];
const B: Format = [BYTE, false];
const BN: Format = [BYTE, true];
const UB: Format = [UNSIGNED_BYTE, false];
const UBN: Format = [UNSIGNED_BYTE, true];
const S: Format = [SHORT, false];
const SN: Format = [SHORT, true];
const US: Format = [UNSIGNED_SHORT, false];
const USN: Format = [UNSIGNED_SHORT, true];

// Source: glTF 2.0 specification, 3.7.2.1, attribute table.
const CORE_ATTRIBUTES: Record<string, Rule> = {
  POSITION: { types: ['VEC3'], formats: [F] },
  NORMAL: { types: ['VEC3'], formats: [F] },
  TANGENT: { types: ['VEC4'], formats: [F] },
  TEXCOORD: { types: ['VEC2'], formats: [F, UBN, USN] },
  COLOR: { types: ['VEC3', 'VEC4'], formats: [F, UBN, USN] },
  JOINTS: { types: ['VEC4'], formats: [UB, US] },
  WEIGHTS: { types: ['VEC4'], formats: [F, UBN, USN] },
};

// Source: KHR_mesh_quantization, "Extending Mesh Attributes" table (added formats).
const QUANTIZED_ATTRIBUTES: Record<string, readonly Format[]> = {
  POSITION: [B, BN, UB, UBN, S, SN, US, USN],
  NORMAL: [BN, SN],
  TANGENT: [BN, SN],
  TEXCOORD: [B, BN, UB, UBN, S, SN, US, USN],
};

// Source: glTF 2.0 specification, 3.7.2.2, morph target table.
const CORE_TARGETS: Record<string, Rule> = {
  POSITION: { types: ['VEC3'], formats: [F] },
  NORMAL: { types: ['VEC3'], formats: [F] },
  TANGENT: { types: ['VEC3'], formats: [F] },
  TEXCOORD: { types: ['VEC2'], formats: [F, BN, SN, UBN, USN] },
  COLOR: { types: ['VEC3', 'VEC4'], formats: [F, BN, SN, UBN, USN] },
};

// Source: KHR_mesh_quantization, "Extending Morph Target Attributes" table (added formats).
const QUANTIZED_TARGETS: Record<string, readonly Format[]> = {
  POSITION: [B, BN, S, SN],
  NORMAL: [BN, SN],
  TANGENT: [BN, SN],
};

const NAMES: Record<number, string> = {
  [BYTE]: 'byte',
  [UNSIGNED_BYTE]: 'unsigned byte',
  [SHORT]: 'short',
  [UNSIGNED_SHORT]: 'unsigned short',
  [UNSIGNED_INT]: 'unsigned int',
  [FLOAT]: 'float',
};

/** Human name of a format, e.g. "short normalized". */
export function formatName(componentType: number, normalized: boolean): string {
  return `${NAMES[componentType] ?? `type ${componentType}`}${normalized ? ' normalized' : ''}`;
}

/** The table key of a semantic: POSITION, NORMAL, TANGENT, or TEXCOORD/COLOR/JOINTS/WEIGHTS for `_n` forms. */
function semanticKey(semantic: string): string | null {
  if (semantic === 'POSITION' || semantic === 'NORMAL' || semantic === 'TANGENT') return semantic;
  const m = /^(TEXCOORD|COLOR|JOINTS|WEIGHTS)_(0|[1-9][0-9]*)$/.exec(semantic);
  return m ? m[1] : null;
}

/**
 * Checks an accessor's type and format against the semantic's table. Returns null when
 * allowed, else a one-line reason. Application-specific (`_NAME`) and unknown semantics are
 * not restricted. `quantized` enables the KHR_mesh_quantization formats.
 */
export function checkAttributeFormat(
  semantic: string,
  type: string,
  componentType: number,
  normalized: boolean,
  isTarget: boolean,
  quantized: boolean,
): string | null {
  const key = semanticKey(semantic);
  if (key === null) return null;
  const rule = (isTarget ? CORE_TARGETS : CORE_ATTRIBUTES)[key];
  if (!rule) return null;
  const extra = quantized ? ((isTarget ? QUANTIZED_TARGETS : QUANTIZED_ATTRIBUTES)[key] ?? []) : [];
  const where = isTarget ? `morph target ${semantic}` : semantic;
  if (!rule.types.includes(type)) return `${where} must be ${rule.types.join(' or ')}, not ${type}`;
  const allowed = [...rule.formats, ...extra];
  for (const [ct, n] of allowed) if (ct === componentType && n === normalized) return null;
  const list = allowed.map(([ct, n]) => formatName(ct, n)).join(', ');
  const hint = !quantized && (isTarget ? QUANTIZED_TARGETS : QUANTIZED_ATTRIBUTES)[key] ? ' (KHR_mesh_quantization allows more)' : '';
  return `${where} must be ${list}${hint}, not ${formatName(componentType, normalized)}`;
}

/** True when the format needs KHR_mesh_quantization (allowed by the extension, not by core glTF). */
export function needsQuantization(semantic: string, type: string, componentType: number, normalized: boolean, isTarget: boolean): boolean {
  return (
    checkAttributeFormat(semantic, type, componentType, normalized, isTarget, false) !== null &&
    checkAttributeFormat(semantic, type, componentType, normalized, isTarget, true) === null
  );
}
