// Gate limits: parsing `--limit` values, counts and shares against their populations, the
// default limits, unchecked files and waivers (DESIGN.md, "Added in the second round").
import { describe, expect, it } from 'vitest';
import { DEFAULT_LIMITS, GATE_INFO, exceeds, gateFigures, parseLimit, parseLimitValue, trippedGates } from '../../src/lib/gates.js';
import { defaultProcessOptions, GATE_NAMES, type ProcessOptions } from '../../src/lib/options.js';
import { applyGates } from '../../src/lib/processFile.js';
import { summarize } from '../../src/report/json.js';
import { gateLine, renderSummary } from '../../src/report/summary.js';
import type { FileReport, PrimitiveReport } from '../../src/report/types.js';

/** A checked primitive of `triangles` triangles and `vertices` vertices, no findings unless given. */
function prim(triangles: number, vertices: number, over: Partial<PrimitiveReport> = {}): PrimitiveReport {
  return {
    mesh: 0, meshName: null, primitive: 0, material: 0, uvSet: 0, normalMapped: true, method: 'mikktspace',
    action: 'baked', skipReason: null, triangles, verticesIn: vertices, verticesOut: vertices, splitVertices: 0, mirrorSeamSplits: 0,
    degenerateUv: { count: 0, triangles: [] }, degenerateGeometry: { count: 0, triangles: [] }, invalidValues: { count: 0 },
    badNormals: { count: 0 }, mirroredTriangles: 0, uvOverlap: { count: 0, triangles: [] }, stackedShells: { count: 0, triangles: [] },
    storedTangents: null, normalsGenerated: null, fallbackTangents: 0, ...over,
  };
}

function opts(over: Partial<ProcessOptions>): ProcessOptions {
  return { ...defaultProcessOptions(), ...over };
}

function file(primitives: PrimitiveReport[]): FileReport {
  return { input: 'a.glb', output: null, status: 'ok', error: null, gates: [], primitives, warnings: [], notes: [], seconds: 0 };
}

describe('parseLimit', () => {
  it('readsCountsAndPercentages', () => {
    expect(parseLimit('degenerate-uv=12')).toEqual({ gate: 'degenerate-uv', limit: { count: 12 } });
    expect(parseLimit('tangent-mismatch=0.5%')).toEqual({ gate: 'tangent-mismatch', limit: { percent: 0.5 } });
    expect(parseLimit('uv-overlap=100%')).toEqual({ gate: 'uv-overlap', limit: { percent: 100 } });
    expect(parseLimitValue(3)).toEqual({ count: 3 });
    expect(parseLimitValue('.25%')).toEqual({ percent: 0.25 });
  });

  it('refusesUnknownGatesBadValuesAndTheUncheckedGate', () => {
    expect(() => parseLimit('degenerate-uvs=1')).toThrow(/unknown gate 'degenerate-uvs'/);
    expect(() => parseLimit('degenerate-uv')).toThrow(/expected <gate>=<n>/);
    for (const bad of ['-1', '1.5', '101%', 'x%', '', '%', '1e3']) {
      expect(() => parseLimit(`degenerate-uv=${bad}`), bad).toThrow(/--limit degenerate-uv: expected a count/);
    }
    expect(() => parseLimitValue(2.5)).toThrow(/expected a count/);
    expect(() => parseLimit('unchecked=1')).toThrow(/takes no limit/);
  });
});

describe('gate figures', () => {
  it('everyGateNamesWhatItCountsAndOverWhichPopulation', () => {
    for (const g of GATE_NAMES) {
      expect(GATE_INFO[g].counts.length, g).toBeGreaterThan(5);
      expect(['triangles', 'corners', 'vertices', 'primitives'], g).toContain(GATE_INFO[g].population);
      expect(DEFAULT_LIMITS[g], g).toBeDefined();
    }
    expect(GATE_INFO['tangent-mismatch'].population).toBe('corners');
    expect(GATE_INFO['bad-normals'].population).toBe('vertices');
    expect(GATE_INFO['uv-overlap'].population).toBe('triangles');
  });

  it('aCountLimitTripsWhenTheCountExceedsIt', () => {
    const p = [prim(100, 60, { degenerateUv: { count: 12, triangles: [] } })];
    expect(trippedGates(p, opts({ failOn: ['degenerate-uv'] }))).toEqual(['degenerate-uv']);
    expect(trippedGates(p, opts({ failOn: ['degenerate-uv'], limits: { 'degenerate-uv': { count: 12 } } }))).toEqual([]);
    expect(trippedGates(p, opts({ failOn: ['degenerate-uv'], limits: { 'degenerate-uv': { count: 11 } } }))).toEqual(['degenerate-uv']);
    const [f] = gateFigures(p, opts({ failOn: ['degenerate-uv'] }), false);
    expect(f).toEqual({ gate: 'degenerate-uv', count: 12, population: 100, of: 'triangles', limit: '0', tripped: true });
    expect(gateLine(f)).toBe('degenerate-uv 12 > 0');
  });

  it('aPercentLimitIsAShareOfThePopulationOverEveryCheckedPrimitive', () => {
    // 3 + 1 bad vertices of 100 + 300: 1%. A skipped primitive's vertices are not in the population.
    const p = [
      prim(50, 100, { badNormals: { count: 3 } }),
      prim(150, 300, { badNormals: { count: 1 } }),
      prim(10, 1000, { action: 'skipped', skipReason: 'no-texcoord' }),
    ];
    const at = (percent: number) => trippedGates(p, opts({ failOn: ['bad-normals'], limits: { 'bad-normals': { percent } } }));
    expect(at(1)).toEqual([]);
    expect(at(0.99)).toEqual(['bad-normals']);
    const [f] = gateFigures(p, opts({ failOn: ['bad-normals'], limits: { 'bad-normals': { percent: 0.5 } } }), false);
    expect(f.population).toBe(400);
    expect(gateLine(f)).toBe('bad-normals 1.00% > 0.5% (4 of 400 vertices)');
    expect(exceeds(0, 0, { percent: 0 })).toBe(false);
  });

  it('tangentMismatchCountsCornersAndInvalidTangentsApartAgainstADefaultOfOnePercent', () => {
    const stored = (mismatched: number, compared: number, invalid = 0) => ({
      invalid, meanAngleDeg: 0, p95AngleDeg: 0, maxAngleDeg: 0, signMismatch: 0, compared, mismatched,
    });
    const o = opts({ failOn: ['tangent-mismatch'] });
    expect(trippedGates([prim(100, 100, { storedTangents: stored(3, 300) })], o)).toEqual([]); // 1.00%: not above
    expect(trippedGates([prim(100, 100, { storedTangents: stored(4, 300) })], o)).toEqual(['tangent-mismatch']);
    // Invalid stored tangents are vertices, judged over the vertices that store tangents.
    expect(trippedGates([prim(100, 100, { storedTangents: stored(0, 300, 1) })], o)).toEqual([]); // 1 of 100: 1%
    expect(trippedGates([prim(100, 100, { storedTangents: stored(0, 300, 2) })], o)).toEqual(['tangent-mismatch']);
    const strict = opts({ failOn: ['tangent-mismatch'], limits: { 'tangent-mismatch': { count: 0 } } });
    const [f] = gateFigures([prim(100, 100, { storedTangents: stored(0, 300, 1) })], strict, false);
    expect(f).toMatchObject({ count: 0, population: 300, invalid: 1, invalidOf: 100, tripped: true });
    expect(gateLine(f)).toBe('tangent-mismatch 0 <= 0 (1 invalid stored tangents of 100 vertices, > 0)');
    const [g] = gateFigures([prim(100, 100, { storedTangents: stored(6, 300, 3) })], o, false);
    expect(gateLine(g)).toBe('tangent-mismatch 2.00% > 1% (6 of 300 corners; 3 invalid stored tangents of 100 vertices, 3.00% > 1%)');
  });

  it('missingTangentsCountsTheTrianglesOfNormalMappedPrimitivesWithoutThem', () => {
    const p = [prim(40, 30), prim(60, 30, { normalMapped: false })];
    const [f] = gateFigures(p, opts({ failOn: ['missing-tangents'] }), false);
    expect([f.count, f.population, f.tripped]).toEqual([40, 100, true]);
    expect(trippedGates(p, opts({ failOn: ['missing-tangents'], limits: { 'missing-tangents': { percent: 40 } } }))).toEqual([]);
  });
});

describe('unchecked files and waivers', () => {
  it('aFileWithGatesAskedAndNothingCheckedIsUncheckedAndTheUncheckedGateFailsIt', () => {
    const skipped = [prim(0, 24, { action: 'skipped', skipReason: 'no-texcoord' })];
    const a = file(skipped);
    applyGates(a, opts({ failOn: ['degenerate-uv'] }), []);
    expect(a.status).toBe('unchecked');
    expect(a.gates).toEqual([]);
    const b = file(skipped);
    applyGates(b, opts({ failOn: ['degenerate-uv', 'unchecked'] }), []);
    expect(b.status).toBe('unchecked');
    expect(b.gates).toEqual(['unchecked']);
    // Without gates there is nothing to vouch for: the file stays ok.
    const c = file(skipped);
    applyGates(c, opts({ failOn: [] }), []);
    expect(c.status).toBe('ok');
    // A file with no primitives at all is unchecked too.
    const d = file([]);
    applyGates(d, opts({ failOn: ['bad-normals'] }), []);
    expect(d.status).toBe('unchecked');
  });

  it('aWaivedGateDoesNotTripAndIsListedWithItsReason', () => {
    const f = file([prim(10, 10, { uvOverlap: { count: 2, triangles: [0, 1] }, degenerateUv: { count: 1, triangles: [3] } })]);
    applyGates(f, opts({ failOn: ['degenerate-uv', 'uv-overlap'] }), [{ gate: 'uv-overlap', reason: 'shared atlas, on purpose' }]);
    expect(f.gates).toEqual(['degenerate-uv']);
    expect(f.waived).toEqual([{ gate: 'uv-overlap', reason: 'shared atlas, on purpose' }]);
    const text = renderSummary(
      { schema: 'tanframe-report/1', tool: { name: 'tanframe', version: '0' }, command: 'audit', method: 'mikktspace', options: {}, files: [f], summary: summarize([f], 0) },
      { color: false },
    );
    expect(text).toContain('         degenerate-uv 1 > 0\n');
    expect(text).toContain('         waived: uv-overlap 2 > 0 (shared atlas, on purpose)\n');
  });
});

describe('summary counts', () => {
  it('countsCleanWithFindingsGatedUncheckedUpToDateAndFailedApart', () => {
    const clean = file([prim(4, 4, { mirroredTriangles: 2 })]); // notes are not findings
    const findings = file([prim(4, 4, { uvOverlap: { count: 2, triangles: [0, 1] } })]);
    const gated = { ...file([prim(4, 4)]), gates: ['missing-tangents'] };
    const unchecked = { ...file([prim(0, 4, { action: 'skipped', skipReason: 'empty' })]), status: 'unchecked' as const };
    const upToDate = { ...file([]), status: 'up-to-date' as const };
    const failed = { ...file([]), status: 'failed' as const, error: { code: 'bad-glb', message: 'x' } };
    const s = summarize([clean, findings, gated, unchecked, upToDate, failed], 0);
    expect([s.files, s.ok, s.clean, s.withFindings, s.gated, s.unchecked, s.upToDate, s.failed]).toEqual([6, 3, 1, 1, 1, 1, 1, 1]);
    expect(s.mirroredTriangles).toBe(2);
    const text = renderSummary(
      { schema: 'tanframe-report/1', tool: { name: 'tanframe', version: '0' }, command: 'audit', method: 'mikktspace', options: {},
        files: [clean, findings, gated, unchecked, upToDate, failed], summary: s },
      { color: false },
    );
    expect(text).toMatch(/total: 6 files: 1 clean, 1 with findings, 1 gated, 1 unchecked, 1 up to date, 1 failed \|/);
    expect(text).toMatch(/^unchecked a\.glb\n\s+nothing could be checked: 0 of 1 primitives checked\n\s+1 primitive skipped \(empty 1\)/m);
  });
});
