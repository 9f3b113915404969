/**
 * Based on: Wavefront MTL material library format (Alias|Wavefront "MTL" file format
 * description: newmtl, Kd, map_Kd, bump / map_Bump with -bm, texture map options);
 * `norm` is the common extension for tangent-space normal maps.
 *
 * Parses the text of a .mtl file into the few material properties tanframe carries
 * into glTF: diffuse colour, diffuse texture and normal texture (with its scale).
 */
import { MAX_WARNINGS_PER_FILE, capWarnings, quoteText } from '../mesh/text.js';

/** A texture statement of a material: the file it names and the options we keep. */
export interface MtlTexture {
  /** File name as written (after the options), backslashes kept verbatim. */
  file: string;
  /** `-bm` bump multiplier, or null when absent. */
  bumpMultiplier: number | null;
  /** 1-based line of the statement in the .mtl (for messages). */
  line: number;
}

/** One `newmtl` block, reduced to what glTF receives. */
export interface MtlMaterial {
  name: string;
  /** `Kd` r g b, or null when absent. */
  kd: [number, number, number] | null;
  /** `map_Kd`, or null. */
  mapKd: MtlTexture | null;
  /** `norm`, `map_Bump` or `bump` (the last one written wins), or null. */
  normal: MtlTexture | null;
}

/** Result of `parseMtl`. */
export interface MtlLibrary {
  /** Materials by name, in order of definition (a repeated `newmtl` replaces the earlier one). */
  materials: Map<string, MtlMaterial>;
  /** Malformed statements that were skipped, one line each ("<label> line N: ..."), at most MAX_WARNINGS_PER_FILE and a closing count. */
  warnings: string[];
}

/** Keeps the first MAX_WARNINGS_PER_FILE warnings and counts the rest (no strings built for them). */
class WarningSink {
  list: string[] = [];
  dropped = 0;
  /** Whether another warning would still be listed (callers build the text only then). */
  get open(): boolean {
    return this.list.length < MAX_WARNINGS_PER_FILE;
  }
  push(text: string): void {
    if (this.open) this.list.push(text);
    else this.dropped++;
  }
}

/**
 * Texture-map options of the MTL format and how many arguments each takes. A range means
 * "at least min, and further arguments while they parse as numbers" (-o, -s, -t take u [v [w]]).
 * Source: Wavefront MTL format description, texture map options (from memory).
 */
const TEXTURE_OPTIONS: Record<string, [number, number]> = {
  '-blendu': [1, 1],
  '-blendv': [1, 1],
  '-bm': [1, 1],
  '-boost': [1, 1],
  '-cc': [1, 1],
  '-clamp': [1, 1],
  '-imfchan': [1, 1],
  '-mm': [2, 2],
  '-o': [1, 3],
  '-s': [1, 3],
  '-t': [1, 3],
  '-texres': [1, 1],
  '-type': [1, 1],
};

const FLOAT_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/** Parses a decimal number token; NaN when the token is not a plain finite decimal. */
export function parseObjFloat(token: string): number {
  if (!FLOAT_RE.test(token)) return NaN;
  const x = Number(token);
  return Number.isFinite(x) ? x : NaN;
}

/**
 * Splits the argument text of a texture statement (`map_Kd -bm 0.5 tex/a b.png`) into its
 * options and file name. Unknown `-x` options are skipped alone with a warning; the file
 * name is the rest of the text after the options (it may contain spaces).
 * Returns null (and a warning) when no file name is left or an option's argument is malformed.
 */
function parseTextureArgs(args: string, line: number, label: string, warnings: WarningSink): MtlTexture | null {
  let rest = args.trim();
  let bumpMultiplier: number | null = null;
  const nextToken = (): string => {
    const m = /^(\S+)\s*/.exec(rest);
    if (!m) return '';
    rest = rest.slice(m[0].length);
    return m[1]!;
  };
  while (rest.startsWith('-')) {
    const m = /^(\S+)/.exec(rest)!;
    const opt = m[1]!.toLowerCase();
    const arity = TEXTURE_OPTIONS[opt];
    if (!arity) {
      if (warnings.open) warnings.push(`${label} line ${line}: unknown texture option '${quoteText(m[1]!, 40)}' skipped`);
      else warnings.dropped++;
      nextToken();
      continue;
    }
    nextToken();
    const args: string[] = [];
    for (let i = 0; i < arity[0]; i++) {
      const t = nextToken();
      if (t === '') {
        warnings.push(`${label} line ${line}: texture option '${opt}' lacks its argument, statement ignored`);
        return null;
      }
      args.push(t);
    }
    for (let i = arity[0]; i < arity[1]; i++) {
      const m2 = /^(\S+)/.exec(rest);
      if (!m2 || Number.isNaN(parseObjFloat(m2[1]!))) break;
      args.push(nextToken());
    }
    if (opt === '-bm') {
      const bm = parseObjFloat(args[0]!);
      if (Number.isNaN(bm)) {
        warnings.push(`${label} line ${line}: malformed -bm value '${args[0]}', statement ignored`);
        return null;
      }
      bumpMultiplier = bm;
    }
  }
  const file = rest.trim();
  if (file === '') {
    warnings.push(`${label} line ${line}: texture statement names no file, ignored`);
    return null;
  }
  return { file, bumpMultiplier, line };
}

/**
 * Parses MTL text. `label` names the file in warnings. Never throws: a malformed statement
 * is skipped with a warning (a broken material library must not lose the geometry).
 * Keywords are matched case-insensitively (`map_Bump` and `map_bump` both occur in the wild).
 */
export function parseMtl(text: string, label: string): MtlLibrary {
  const materials = new Map<string, MtlMaterial>();
  const warnings = new WarningSink();
  let current: MtlMaterial | null = null;
  const lines = text.replace(/^\uFEFF/, '').split('\n');
  for (let i = 0; i < lines.length; i++) {
    const lineNo = i + 1;
    let line = lines[i]!;
    const hash = line.indexOf('#');
    if (hash >= 0) line = line.slice(0, hash);
    line = line.trim();
    if (line === '') continue;
    const m = /^(\S+)\s*(.*)$/.exec(line)!;
    const key = m[1]!.toLowerCase();
    const rest = m[2]!;
    if (key === 'newmtl') {
      const name = rest.trim();
      current = { name, kd: null, mapKd: null, normal: null };
      materials.set(name, current);
      continue;
    }
    if (current === null) {
      if (key === 'kd' || key === 'map_kd' || key === 'norm' || key === 'map_bump' || key === 'bump') {
        warnings.push(`${label} line ${lineNo}: '${m[1]}' before any newmtl, ignored`);
      }
      continue;
    }
    switch (key) {
      case 'kd': {
        const toks = rest.split(/\s+/);
        if (toks[0] === 'spectral' || toks[0] === 'xyz') {
          warnings.push(`${label} line ${lineNo}: Kd ${toks[0]} form not supported, ignored`);
          break;
        }
        const r = parseObjFloat(toks[0] ?? '');
        // Source: MTL format, "Kd r g b": g and b default to r when omitted (from memory).
        const g = toks.length > 1 ? parseObjFloat(toks[1]!) : r;
        const b = toks.length > 2 ? parseObjFloat(toks[2]!) : r;
        if (Number.isNaN(r) || Number.isNaN(g) || Number.isNaN(b)) {
          warnings.push(`${label} line ${lineNo}: malformed Kd, ignored`);
          break;
        }
        current.kd = [r, g, b];
        break;
      }
      case 'map_kd': {
        const t = parseTextureArgs(rest, lineNo, label, warnings);
        if (t) current.mapKd = t;
        break;
      }
      case 'norm':
      case 'map_bump':
      case 'bump': {
        const t = parseTextureArgs(rest, lineNo, label, warnings);
        if (t) current.normal = t;
        break;
      }
      default:
        break;
    }
  }
  return { materials, warnings: capWarnings(warnings.list, warnings.dropped) };
}
