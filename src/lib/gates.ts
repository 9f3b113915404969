/**
 * The `--fail-on` gates: what each one counts, over which population, the limits that let a
 * file through, and which gates a file's findings trip.
 */
import { TanframeError } from '../mesh/errors.js';
import type { GateFigure, PrimitiveReport } from '../report/types.js';
import { GATE_NAMES, type GateLimit, type GateName, type ProcessOptions } from './options.js';

/** What a gate counts and over which population (shown in --help, the README and reports). */
export interface GateInfo {
  /** What one counted item is, plural ("degenerate UV triangles"). */
  counts: string;
  /** The population a percent limit is a share of: 'triangles', 'corners', 'vertices' or 'primitives'. */
  population: 'triangles' | 'corners' | 'vertices' | 'primitives';
  /** Whether the gate takes a limit (`unchecked` does not: a file is checked or it is not). */
  limitable: boolean;
}

/**
 * Each gate's count and population. Populations are those of the primitives that were checked
 * (skipped primitives count in neither):
 * - degenerate-uv: triangles whose UVs give no tangent direction, over triangles;
 * - degenerate-geometry: triangles with no area in space, over triangles;
 * - invalid-values: vertices holding a NaN or infinite value, over vertices;
 * - bad-normals: vertices whose stored normal is zero, not unit (for its encoding) or flipped, over vertices;
 * - tangent-mismatch: corners whose stored tangent is more than --tolerance degrees off the
 *   recomputed one or has the other sign, over the compared corners; and apart, vertices whose
 *   stored tangent is invalid (not unit for its encoding, not orthogonal, w not +-1), over the
 *   vertices of primitives with stored tangents: either part beyond the limit trips it;
 * - missing-tangents: triangles of normal-mapped primitives that store no TANGENT, over triangles;
 * - uv-overlap: triangles that partly overlap another one in UV space, over triangles;
 * - unchecked: the file had gates asked for and no primitive could be checked (no limit).
 */
export const GATE_INFO: Record<GateName, GateInfo> = {
  'degenerate-uv': { counts: 'degenerate UV triangles', population: 'triangles', limitable: true },
  'degenerate-geometry': { counts: 'degenerate geometry triangles', population: 'triangles', limitable: true },
  'invalid-values': { counts: 'vertices with NaN or infinite values', population: 'vertices', limitable: true },
  'bad-normals': { counts: 'vertices with bad normals', population: 'vertices', limitable: true },
  'tangent-mismatch': { counts: 'corners whose stored tangent differs', population: 'corners', limitable: true },
  'missing-tangents': { counts: 'triangles without stored tangents', population: 'triangles', limitable: true },
  'uv-overlap': { counts: 'partly overlapping UV triangles', population: 'triangles', limitable: true },
  unchecked: { counts: 'files with nothing checked', population: 'primitives', limitable: false },
};

/**
 * Default limits. Every gate trips on its first finding except `tangent-mismatch`, whose
 * default comes from measurement on the shared Khronos samples (README, "Limits"): files whose
 * tangents the standard method made show 0 of their corners beyond 1 degree (the exporter's
 * other quad diagonal stays below 1 degree, METHODS.md step 9), files made another way or with
 * the other v convention 50% to 100%. 1% sits far from both.
 */
export const DEFAULT_LIMITS: Record<GateName, GateLimit> = {
  'degenerate-uv': { count: 0 },
  'degenerate-geometry': { count: 0 },
  'invalid-values': { count: 0 },
  'bad-normals': { count: 0 },
  'tangent-mismatch': { percent: 1 },
  'missing-tangents': { count: 0 },
  'uv-overlap': { count: 0 },
  unchecked: { count: 0 },
};

/** A limit as written: `12` or `0.5%`. */
export function formatLimit(limit: GateLimit): string {
  return 'count' in limit ? String(limit.count) : `${limit.percent}%`;
}

/**
 * Parses a limit's value: a non-negative integer count (`12`, or the number 12 from a config
 * file) or a percentage in [0, 100] (`0.5%`). Throws TanframeError 'usage' naming `what` when
 * the value is neither.
 */
export function parseLimitValue(value: string | number, what = 'limit'): GateLimit {
  if (typeof value === 'number') {
    if (Number.isInteger(value) && value >= 0) return { count: value };
    throw new TanframeError('usage', `${what}: expected a count (an integer >= 0) or a percentage such as "0.5%", got ${value}`);
  }
  const s = value.trim();
  const pct = /^(\d+(?:\.\d+)?|\.\d+)%$/.exec(s);
  if (pct) {
    const p = Number(pct[1]);
    if (p <= 100) return { percent: p };
  } else if (/^\d+$/.test(s)) {
    return { count: Number(s) };
  }
  throw new TanframeError('usage', `${what}: expected a count (an integer >= 0) or a percentage in [0, 100] such as "0.5%", got '${value}'`);
}

/**
 * Parses one `--limit` argument, `<gate>=<n>` or `<gate>=<p>%`. Returns the gate and its
 * limit; throws TanframeError 'usage' for an unknown gate, a gate that takes no limit or a
 * bad value.
 */
export function parseLimit(spec: string): { gate: GateName; limit: GateLimit } {
  const eq = spec.indexOf('=');
  if (eq < 0) throw new TanframeError('usage', `--limit: expected <gate>=<n> or <gate>=<p>%, got '${spec}'`);
  const gate = checkGateName(spec.slice(0, eq).trim(), '--limit');
  return { gate, limit: parseLimitValue(spec.slice(eq + 1), `--limit ${gate}`) };
}

/** Returns `name` as a gate that takes a limit, or throws TanframeError 'usage' naming `where`. */
export function checkGateName(name: string, where: string): GateName {
  if (!(GATE_NAMES as readonly string[]).includes(name)) {
    throw new TanframeError('usage', `${where}: unknown gate '${name}' (gates: ${GATE_NAMES.join(', ')})`);
  }
  const gate = name as GateName;
  if (!GATE_INFO[gate].limitable) throw new TanframeError('usage', `${where}: the gate '${gate}' takes no limit`);
  return gate;
}

/** The limit in force for `gate`: the options' own, else the default. */
export function limitOf(options: ProcessOptions, gate: GateName): GateLimit {
  return options.limits?.[gate] ?? DEFAULT_LIMITS[gate];
}

/** Whether `count` of `population` exceeds `limit`. */
export function exceeds(count: number, population: number, limit: GateLimit): boolean {
  if ('count' in limit) return count > limit.count;
  return population > 0 && (count * 100) / population > limit.percent;
}

/** Whether a primitive was checked (it took part in the solve and the diagnostics). */
export function wasChecked(p: PrimitiveReport): boolean {
  return p.action !== 'skipped';
}

/** One gate's count and population; tangent-mismatch adds its invalid stored tangents (vertices). */
export interface GateCount {
  count: number;
  population: number;
  invalid: number;
  invalidPopulation: number;
}

/**
 * A file's figure for each gate: the count and population of GATE_INFO over its checked
 * primitives, and (for tangent-mismatch) the invalid stored tangents over the vertices that
 * store one.
 */
export function gateCounts(primitives: PrimitiveReport[]): Record<GateName, GateCount> {
  const z = () => ({ count: 0, population: 0, invalid: 0, invalidPopulation: 0 });
  const out = {} as Record<GateName, GateCount>;
  for (const g of GATE_NAMES) out[g] = z();
  let checked = 0;
  for (const p of primitives) {
    out.unchecked.population++;
    if (!wasChecked(p)) continue;
    checked++;
    const tri = p.triangles, vert = p.verticesIn;
    const add = (g: GateName, count: number, population: number) => { out[g].count += count; out[g].population += population; };
    add('degenerate-uv', p.degenerateUv.count, tri);
    add('degenerate-geometry', p.degenerateGeometry.count, tri);
    add('invalid-values', p.invalidValues.count, vert);
    add('bad-normals', p.badNormals.count, vert);
    add('uv-overlap', p.uvOverlap.count, tri);
    add('missing-tangents', p.normalMapped && p.storedTangents === null ? tri : 0, tri);
    const s = p.storedTangents;
    if (s) {
      add('tangent-mismatch', s.mismatched, s.compared);
      out['tangent-mismatch'].invalid += s.invalid;
      out['tangent-mismatch'].invalidPopulation += vert;
    }
  }
  out.unchecked.count = primitives.length > 0 && checked === 0 ? 1 : 0;
  return out;
}

/**
 * The figure of every gate in `options.failOn`, in the order of GATE_NAMES: its count, its
 * population, the limit in force and whether it tripped. `unchecked` trips when the file
 * had primitives and none was checked (see fileUnchecked for files with none at all).
 */
export function gateFigures(primitives: PrimitiveReport[], options: ProcessOptions, unchecked: boolean): GateFigure[] {
  const on = new Set(options.failOn);
  const counts = gateCounts(primitives);
  const out: GateFigure[] = [];
  for (const g of GATE_NAMES) {
    if (!on.has(g)) continue;
    const c = counts[g];
    const limit = limitOf(options, g);
    let tripped: boolean;
    if (g === 'unchecked') tripped = unchecked;
    else {
      tripped = exceeds(c.count, c.population, limit);
      if (g === 'tangent-mismatch' && exceeds(c.invalid, c.invalidPopulation, limit)) tripped = true;
    }
    const figure: GateFigure = {
      gate: g,
      count: g === 'unchecked' ? (unchecked ? 1 : 0) : c.count,
      population: c.population,
      of: GATE_INFO[g].population,
      limit: formatLimit(limit),
      tripped,
    };
    if (g === 'tangent-mismatch') {
      figure.invalid = c.invalid;
      figure.invalidOf = c.invalidPopulation;
    }
    out.push(figure);
  }
  return out;
}

/**
 * Returns the gates of `options.failOn` that the primitives' findings trip, in the order of
 * GATE_NAMES (each against its limit, see gateFigures). `unchecked` (whether the file counts
 * as unchecked) defaults to: it has primitives and none was checked.
 */
export function trippedGates(primitives: PrimitiveReport[], options: ProcessOptions, unchecked?: boolean): GateName[] {
  const u = unchecked ?? (primitives.length > 0 && !primitives.some(wasChecked));
  return gateFigures(primitives, options, u).filter((f) => f.tripped).map((f) => f.gate as GateName);
}
