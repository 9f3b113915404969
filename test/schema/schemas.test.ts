/**
 * The shipped JSON Schemas (schema/): they compile under ajv's strict mode (JSON Schema draft
 * 2020-12), the reports the CLI writes over the demo and the fixtures match the report
 * schema, every example config matches the config schema, and each schema refuses what
 * DESIGN.md ("Report", "Config") rules out.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { assertReportsOf, configSchemaErrors, reportSchemaErrors, snapshotReports } from '../helpers/schemas.js';

const repo = path.resolve(__dirname, '../..');
const demo = path.join(repo, 'examples', 'harbor-props');
const ALL_GATES = 'degenerate-uv,degenerate-geometry,invalid-values,bad-normals,tangent-mismatch,missing-tangents,uv-overlap';

let tmp = '';
beforeAll(() => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-schemas-'));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

function readJson(file: string): any {
  return JSON.parse(fs.readFileSync(file, 'utf8'));
}

describe('the package ships the schemas', () => {
  it('listsSchemaInPackageFiles', () => {
    const pkg = readJson(path.join(repo, 'package.json'));
    expect(pkg.files).toContain('schema');
    expect(fs.readdirSync(path.join(repo, 'schema')).sort()).toEqual(['tanframe-config-1.schema.json', 'tanframe-report-1.schema.json']);
  });
});

describe('reports the CLI writes match tanframe-report/1', () => {
  // runCli checks every --report / --json it sees as well; these assert it here, by name.
  it('auditOfTheDemoWithEveryGate', async () => {
    const out = path.join(tmp, 'demo-audit.json');
    const r = await runCli(['audit', demo, '--all-primitives', '--fail-on', ALL_GATES, '--jobs', '1', '--quiet', '--report', out], repo);
    expect(r.code).toBe(1); // the demo's broken props trip gates
    const report = readJson(out);
    expect(report.files.length).toBeGreaterThan(5);
    expect(report.files.some((f: any) => f.gates.length > 0)).toBe(true);
    expect(reportSchemaErrors(report)).toEqual([]);
  });

  it('bakeOfTheDemoAndItsJsonOnStdout', async () => {
    const r = await runCli(['bake', demo, '-o', path.join(tmp, 'baked'), '--jobs', '1', '--json'], repo);
    const report = JSON.parse(r.stdout);
    expect(report.files.some((f: any) => f.output !== null)).toBe(true);
    expect(reportSchemaErrors(report)).toEqual([]);
  });

  it('auditOfTheHostileFixtures', async () => {
    for (const dir of ['bad', 'values']) {
      const out = path.join(tmp, `fixtures-${dir}.json`);
      await runCli(['audit', path.join(repo, 'fixtures', dir), '--fail-on', ALL_GATES, '--jobs', '1', '--quiet', '--report', out], repo);
      const report = readJson(out);
      expect(report.files.length).toBeGreaterThan(3);
      if (dir === 'bad') expect(report.files.every((f: any) => f.status === 'failed')).toBe(true);
      expect(reportSchemaErrors(report), dir).toEqual([]);
    }
  });
});

describe('the check every in-process CLI run gets', () => {
  it('failsOnAReportThatDoesNotMatchAndPassesOneThatDoes', async () => {
    const good = path.join(tmp, 'hook-good.json');
    await runCli(['audit', path.join(demo, 'crate'), '--jobs', '1', '--quiet', '--report', good], repo);
    expect(() => assertReportsOf(['audit', 'x', '--report', good], tmp, '')).not.toThrow();
    const bad = path.join(tmp, 'hook-bad.json');
    const report = readJson(good);
    report.files[0].status = 'fine';
    fs.writeFileSync(bad, JSON.stringify(report));
    expect(() => assertReportsOf(['audit', 'x', '--report', bad], tmp, '')).toThrow(/status/);
    expect(() => assertReportsOf(['audit', 'x', '--json'], tmp, JSON.stringify(report))).toThrow(/does not match/);
    expect(() => assertReportsOf(['report', 'a.json', '--json', bad], tmp, '')).toThrow(/does not match/);
    // A file the run did not write (a refused run naming an input as --report) is not checked.
    const before = snapshotReports(['audit', 'x', '--report', bad], tmp);
    expect(() => assertReportsOf(['audit', 'x', '--report', bad], tmp, '', before)).not.toThrow();
  });
});

describe('the report schema refuses what DESIGN.md rules out', () => {
  let base: any;
  beforeAll(async () => {
    const out = path.join(tmp, 'base.json');
    await runCli(['audit', path.join(demo, 'crate'), '--jobs', '1', '--quiet', '--report', out], repo);
    base = readJson(out);
  });
  const variant = (change: (r: any) => void) => {
    const r = structuredClone(base);
    change(r);
    return reportSchemaErrors(r);
  };

  it('acceptsExtraFieldsAndTheSecondRoundFields', () => {
    expect(variant((r) => { r.extra = 1; r.files[0].extra = 'x'; r.files[0].primitives[0].extra = true; })).toEqual([]);
    expect(variant((r) => {
      r.summary.upToDate = 0; r.summary.unchecked = 1;
      r.files[0].waived = [{ gate: 'uv-overlap', reason: 'shared atlas, on purpose' }];
      r.files[0].primitives[0].stackedShells = { count: 2, triangles: [0, 1] };
    })).toEqual([]);
    expect(variant((r) => { r.files[0].status = 'up-to-date'; })).toEqual([]);
  });

  it('typesTheLocationsOfFindings', () => {
    // Reports of earlier versions (counts only) stay valid.
    expect(variant((r) => { r.files[0].primitives[0].invalidValues = { count: 0 }; r.files[0].primitives[0].badNormals = { count: 0 }; })).toEqual([]);
    expect(variant((r) => {
      r.files[0].primitives[0].degenerateUv = { count: 2, triangles: [3, 4], centroids: [[0, 1.5, -2], null], lines: [12, 12] };
      r.files[0].primitives[0].badNormals = { count: 1, vertices: [7], positions: [[1, 2, 3]], triangleCount: 1, triangles: [3], centroids: [[1, 1, 1]] };
    })).toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].degenerateUv.centroids = [[1, 2]]; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].degenerateUv.centroids = [['1', 2, 3]]; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].degenerateUv.lines = [0]; })).not.toEqual([]); // lines start at 1
    expect(variant((r) => { r.files[0].primitives[0].badNormals = { count: 1, vertices: [-1] }; })).not.toEqual([]);
  });

  it('refusesWrongNamesShapesAndValues', () => {
    expect(variant((r) => { r.schema = 'tanframe-report/2'; })).not.toEqual([]);
    expect(variant((r) => { delete r.summary; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].status = 'done'; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].gates = ['no-such-gate']; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].waived = [{ gate: 'uv-overlap' }]; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].degenerateUv = { count: -1, triangles: [] }; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].degenerateUv.triangles = new Array(1001).fill(0); })).not.toEqual([]);
    expect(variant((r) => { r.files[0].primitives[0].stackedShells = 'two'; })).not.toEqual([]);
    expect(variant((r) => { r.summary.upToDate = -1; })).not.toEqual([]);
    expect(variant((r) => { delete r.summary.upToDate; })).not.toEqual([]);
    expect(variant((r) => { delete r.summary.unchecked; })).not.toEqual([]);
    expect(variant((r) => { delete r.files[0].primitives[0].stackedShells; })).not.toEqual([]);
    // A failed file carries its error; any other status has none.
    expect(variant((r) => { r.files[0].status = 'failed'; })).not.toEqual([]);
    expect(variant((r) => { r.files[0].error = { code: 'x', message: 'y' }; })).not.toEqual([]);
    // An unchecked file says why for each primitive.
    expect(variant((r) => { r.files[0].status = 'unchecked'; r.files[0].primitives[0].skipReason = null; })).not.toEqual([]);
  });
});

/** JSON code blocks holding a config ("tanframe-config/1") in a Markdown file. */
function configBlocks(file: string): unknown[] {
  if (!fs.existsSync(file)) return [];
  const text = fs.readFileSync(file, 'utf8');
  const out: unknown[] = [];
  for (const m of text.matchAll(/```(?:json)?\n([\s\S]*?)```/g)) {
    const body = m[1].trim();
    if (!body.startsWith('{') || !body.includes('"tanframe-config/1"')) continue;
    out.push(JSON.parse(body));
  }
  return out;
}

describe('configs match tanframe-config/1', () => {
  it('everyExampleConfigInTheRepository', () => {
    const found: string[] = [];
    const walk = (dir: string) => {
      for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
        if (e.name === 'node_modules' || e.name.startsWith('.') || e.name === 'dist') continue;
        const p = path.join(dir, e.name);
        if (e.isDirectory()) walk(p);
        else if (e.name === 'tanframe.config.json') found.push(p);
      }
    };
    walk(repo);
    expect(found).toContain(path.join(repo, 'docs', 'config-example', 'tanframe.config.json'));
    for (const f of found) expect(configSchemaErrors(readJson(f)), path.relative(repo, f)).toEqual([]);
  });

  it('everyConfigShownInTheReadme', () => {
    for (const c of configBlocks(path.join(repo, 'README.md'))) expect(configSchemaErrors(c)).toEqual([]);
  });

  it('theExampleInDesignMd', (ctx) => {
    const design = path.resolve(repo, '../shared/DESIGN.md');
    const blocks = fs.existsSync(design) ? fs.readFileSync(design, 'utf8').match(/\{ "schema": "tanframe-config\/1",[\s\S]*?\] \}\n/) : null;
    if (!blocks) {
      console.log('SKIPPED: ../shared/DESIGN.md (the config example) is not there');
      ctx.skip();
      return;
    }
    // Source: DESIGN.md, "Config": the example config as the design gives it.
    expect(configSchemaErrors(JSON.parse(blocks[0]))).toEqual([]);
  });

  it('refusesUnknownKeysAndBadValuesNamingTheKey', () => {
    const ok = { schema: 'tanframe-config/1' };
    expect(configSchemaErrors(ok)).toEqual([]);
    const bad: [unknown, string][] = [
      [{ ...ok, failon: ['degenerate-uv'] }, 'failon'],
      [{ ...ok, method: 'other' }, '/method'],
      [{ ...ok, uv: -1 }, '/uv'],
      [{ ...ok, uv: 1.5 }, '/uv'],
      [{ ...ok, failOn: ['no-such-gate'] }, '/failOn/0'],
      [{ ...ok, limits: { 'degenerate-uv': '5' } }, '/limits/degenerate-uv'],
      [{ ...ok, limits: { 'degenerate-uv': '101%' } }, '/limits/degenerate-uv'],
      [{ ...ok, limits: { 'degenerate-uv': -2 } }, '/limits/degenerate-uv'],
      [{ ...ok, limits: { unchecked: 1 } }, 'unchecked'],
      [{ ...ok, tolerance: 200 }, '/tolerance'],
      [{ ...ok, overrides: [{ uv: 1 }] }, 'files'],
      [{ ...ok, overrides: [{ files: ['a/**'], exclude: ['b'] }] }, 'exclude'],
      [{ ...ok, waivers: [{ files: ['a/**'], gates: ['uv-overlap'] }] }, 'reason'],
      [{ ...ok, waivers: [{ files: ['a/**'], gates: ['uv-overlap'], reason: '  ' }] }, '/waivers/0/reason'],
      [{ schema: 'tanframe-config/2' }, '/schema'],
      [{}, 'schema'],
    ];
    for (const [config, key] of bad) {
      const errors = configSchemaErrors(config);
      expect(errors.join('\n'), JSON.stringify(config)).toContain(key);
    }
    expect(configSchemaErrors({ ...ok, limits: { 'tangent-mismatch': '0.5%', 'degenerate-uv': 2, 'uv-overlap': '100%' } })).toEqual([]);
  });
});
