/**
 * The `--fail-on` gates: which of a file's findings trip the build.
 */
import type { PrimitiveReport } from '../report/types.js';
import type { GateName, ProcessOptions } from './options.js';

/**
 * Returns the gates of `options.failOn` that the primitives' findings trip, in the order of
 * GATE_NAMES. `degenerate-uv` trips when the file's count exceeds `maxDegenerateUv`;
 * `tangent-mismatch` when a stored tangent is invalid, differs by more than `tolerance`
 * degrees or has the other sign; `missing-tangents` when a primitive that needs tangents has
 * none stored; the others on any finding.
 */
export function trippedGates(primitives: PrimitiveReport[], options: ProcessOptions): GateName[] {
  const on = new Set(options.failOn);
  let degenerateUv = 0, degenerateGeometry = 0, invalid = 0, badNormals = 0, overlap = 0;
  let mismatch = false, missing = false;
  for (const p of primitives) {
    if (p.action === 'skipped') continue;
    degenerateUv += p.degenerateUv.count;
    degenerateGeometry += p.degenerateGeometry.count;
    invalid += p.invalidValues.count;
    badNormals += p.badNormals.count;
    overlap += p.uvOverlap.count;
    const s = p.storedTangents;
    if (s === null) missing = missing || p.normalMapped;
    else if (s.invalid > 0 || s.signMismatch > 0 || s.mismatched > 0) mismatch = true;
  }
  const out: GateName[] = [];
  if (on.has('degenerate-uv') && degenerateUv > options.maxDegenerateUv) out.push('degenerate-uv');
  if (on.has('degenerate-geometry') && degenerateGeometry > 0) out.push('degenerate-geometry');
  if (on.has('invalid-values') && invalid > 0) out.push('invalid-values');
  if (on.has('bad-normals') && badNormals > 0) out.push('bad-normals');
  if (on.has('tangent-mismatch') && mismatch) out.push('tangent-mismatch');
  if (on.has('missing-tangents') && missing) out.push('missing-tangents');
  if (on.has('uv-overlap') && overlap > 0) out.push('uv-overlap');
  return out;
}
