// The command line's --limit, unchecked files and the config file tanframe.config.json
// (DESIGN.md, "Added in the second round" and "Config"), end to end in-process, on generated
// grids (test/helpers/gridAsset.ts: an 8 x 8 normal-mapped grid, 128 triangles, 384 vertices,
// every triangle on its own vertices).
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';

let root = '';
let project = '';

/** A grid with `k` degenerate-UV triangles (triangles 0, 2, 4, ...: all corners on corner 0's UV). */
function degenerate(k: number) {
  const g = gridAsset(8);
  for (let i = 0; i < k; i++) {
    const a = cornerUv(g, 2 * i, 0);
    setCornerUv(g, 2 * i, 1, a);
    setCornerUv(g, 2 * i, 2, a);
  }
  return g;
}

/*
 * project/                 (holds .git: discovery stops here)
 *   tanframe.config.json   written per test
 *   props/crate.glb        3 degenerate-UV triangles
 *   props/legacy/old.glb   5 degenerate-UV triangles
 *   characters/hero.glb    1 degenerate-UV triangle
 *   third_party/lib.glb    9 degenerate-UV triangles
 */
beforeAll(async () => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-config-'));
  project = path.join(root, 'project');
  fs.mkdirSync(path.join(project, '.git'), { recursive: true });
  await writeGridGlb(path.join(project, 'props'), 'crate', degenerate(3));
  await writeGridGlb(path.join(project, 'props', 'legacy'), 'old', degenerate(5));
  await writeGridGlb(path.join(project, 'characters'), 'hero', degenerate(1));
  await writeGridGlb(path.join(project, 'third_party'), 'lib', degenerate(9));
});
afterAll(() => {
  fs.rmSync(root, { recursive: true, force: true });
});

/** Writes a config; an object gets `"schema": "tanframe-config/1"` first unless it names its own. */
function writeConfig(dir: string, config: unknown): void {
  const text = typeof config === 'string' ? config : JSON.stringify({ schema: 'tanframe-config/1', ...(config as object) }, null, 2);
  fs.writeFileSync(path.join(dir, 'tanframe.config.json'), text);
}

async function audit(cwd: string, args: string[]): Promise<{ code: number; stdout: string; stderr: string; report: any }> {
  const r = await runCli(['audit', ...args, '--json', '--jobs', '1'], cwd);
  return { ...r, report: r.stdout ? JSON.parse(r.stdout) : null };
}

const byInput = (report: any) => Object.fromEntries(report.files.map((f: any) => [f.input.split(path.sep).join('/'), f]));

describe('--limit', () => {
  it('aCountAndAShareOfTrianglesLetAFileThroughOrTripIt', async () => {
    const file = path.join(project, 'props', 'crate.glb');
    const run = async (...extra: string[]) => (await audit(root, [file, '--fail-on', 'degenerate-uv', '--no-config', ...extra])).code;
    expect(await run()).toBe(1);
    expect(await run('--limit', 'degenerate-uv=3')).toBe(0);
    expect(await run('--limit', 'degenerate-uv=2')).toBe(1);
    // 3 of 128 triangles is 2.34%.
    expect(await run('--limit', 'degenerate-uv=2.5%')).toBe(0);
    expect(await run('--limit', 'degenerate-uv=2%')).toBe(1);
    // --max-degenerate-uv is the same as --limit degenerate-uv=n.
    expect(await run('--max-degenerate-uv', '3')).toBe(0);
    expect(await run('--max-degenerate-uv', '2')).toBe(1);
  });

  it('theGateLineSaysTheCountAgainstTheLimit', async () => {
    const r = await runCli(['audit', 'props/crate.glb', '--fail-on', 'degenerate-uv', '--limit', 'degenerate-uv=1%', '--no-config'], project);
    expect(r.code).toBe(1);
    expect(r.stdout).toContain('\n         degenerate-uv 2.34% > 1% (3 of 128 triangles)\n');
  });

  it('aBadLimitIsAUsageErrorNamingIt', async () => {
    for (const bad of ['degenerate-uv', 'nonsense=1', 'degenerate-uv=-1', 'degenerate-uv=150%', 'unchecked=1']) {
      const r = await runCli(['audit', 'props/crate.glb', '--limit', bad], project);
      expect(r.code, bad).toBe(2);
      expect(r.stderr, bad).toMatch(/--limit/);
      expect(r.stdout, bad).toBe('');
    }
  });
});

describe('unchecked files', () => {
  it('aMissingUvSetWithGatesAskedIsUncheckedNotOk', async () => {
    // The case: --uv 7 on files without TEXCOORD_7 used to print "ok ... 0 triangles".
    const r = await runCli(['audit', 'props', '--uv', '7', '--fail-on', 'degenerate-uv', '--no-config', '--junit', '../junit-unchecked.xml', '--jobs', '1'], project);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^unchecked props\/crate\.glb\n\s+nothing could be checked: 0 of 1 primitives checked\n\s+1 primitive skipped \(no-texcoord 1\)$/m);
    expect(r.stdout).not.toMatch(/^ok /m);
    expect(r.stdout).toMatch(/total: 2 files: 0 clean, 0 with findings, 0 gated, 2 unchecked, 0 up to date, 0 failed \|/);
    const junit = fs.readFileSync(path.join(root, 'junit-unchecked.xml'), 'utf8');
    expect(junit).toMatch(/skipped="2"/);
    expect(junit).toContain('<skipped message="unchecked: nothing could be checked (1 primitive skipped (no-texcoord 1))"/>');

    const json = await audit(project, ['props', '--uv', '7', '--fail-on', 'degenerate-uv', '--no-config']);
    expect(json.report.summary.unchecked).toBe(2);
    expect(json.report.files.map((f: any) => f.status)).toEqual(['unchecked', 'unchecked']);
    expect(json.report.files[0].primitives[0].skipReason).toBe('no-texcoord');
  });

  it('failOnUncheckedMakesItFail', async () => {
    const r = await runCli(['audit', 'props/crate.glb', '--uv', '7', '--fail-on', 'degenerate-uv,unchecked', '--no-config', '--junit', '../junit-unchecked-fail.xml'], project);
    expect(r.code).toBe(1);
    expect(r.stdout).toMatch(/^gated\s+props\/crate\.glb\s+\[unchecked\]/m);
    const junit = fs.readFileSync(path.join(root, 'junit-unchecked-fail.xml'), 'utf8');
    expect(junit).toMatch(/failures="1"/);
    expect(junit).toContain('<failure type="unchecked"');
  });

  it('withoutGatesAFileWithNothingCheckedStaysOkAndSaysWhy', async () => {
    const r = await runCli(['audit', 'props/crate.glb', '--uv', '7', '--no-config'], project);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^ok\s+props\/crate\.glb\s+\(0 of 1 primitives, 0 triangles, no findings; 1 primitive skipped \(no-texcoord 1\)\)$/m);
  });
});

describe('tanframe.config.json', () => {
  it('isFoundInTheFolderOrItsParentsUpToTheGitFolderAndGlobsAreRelativeToIt', async () => {
    writeConfig(project, {
      schema: 'tanframe-config/1',
      failOn: ['degenerate-uv'],
      limits: { 'degenerate-uv': 4 },
      exclude: ['third_party/**'],
      overrides: [{ files: ['props/legacy/**'], limits: { 'degenerate-uv': 5 } }, { files: ['characters/**'], limits: { 'degenerate-uv': 0 } }],
    });
    // Run from a subfolder: the config one level up is found; its globs are relative to it.
    const r = await audit(path.join(project, 'props'), ['.', '../characters', '../third_party']);
    expect(r.code).toBe(1);
    const files = byInput(r.report);
    expect(Object.keys(files).sort()).toEqual(['../characters/hero.glb', 'crate.glb', 'legacy/old.glb']); // third_party excluded
    expect(files['crate.glb'].gates).toEqual([]); // 3 <= 4
    expect(files['legacy/old.glb'].gates).toEqual([]); // 5 <= 5 (override)
    expect(files['../characters/hero.glb'].gates).toEqual(['degenerate-uv']); // 1 > 0 (override)
    expect(files['legacy/old.glb'].gateFigures[0]).toMatchObject({ count: 5, limit: '5', tripped: false });
    expect(r.report.options.limits).toEqual({ 'degenerate-uv': '4' });
  });

  it('aFileNamedExplicitlyIsNotExcluded', async () => {
    writeConfig(project, { exclude: ['third_party/**'] });
    const r = await audit(project, ['third_party/lib.glb']);
    expect(r.report.files).toHaveLength(1);
  });

  it('stopsAtTheFolderHoldingGit', async () => {
    // A config above the project's .git folder is not read.
    writeConfig(root, { failOn: ['degenerate-uv'] });
    fs.rmSync(path.join(project, 'tanframe.config.json'), { force: true });
    try {
      const r = await audit(project, ['props/crate.glb']);
      expect(r.code).toBe(0);
      expect(r.report.options.failOn).toEqual([]);
    } finally {
      fs.rmSync(path.join(root, 'tanframe.config.json'));
    }
  });

  it('theCommandLineWinsOverTheFileAndItsOverrides', async () => {
    writeConfig(project, {
      failOn: ['degenerate-uv'], limits: { 'degenerate-uv': 10 },
      overrides: [{ files: ['props/**'], limits: { 'degenerate-uv': 20 }, tolerance: 5 }],
    });
    const r = await audit(project, ['props/crate.glb', '--limit', 'degenerate-uv=2', '--tolerance', '2']);
    expect(r.code).toBe(1);
    expect(r.report.files[0].gateFigures[0]).toMatchObject({ count: 3, limit: '2', tripped: true });
    const lenient = await audit(project, ['props/crate.glb']);
    expect(lenient.code).toBe(0);
    expect(lenient.report.files[0].gateFigures[0]).toMatchObject({ count: 3, limit: '20' });
    // --fail-on given replaces the file's list.
    const other = await audit(project, ['props/crate.glb', '--fail-on', 'uv-overlap']);
    expect(other.report.files[0].gateFigures.map((g: any) => g.gate)).toEqual(['uv-overlap']);
  });

  it('overridesApplyInOrderLaterOnesWinning', async () => {
    writeConfig(project, {
      failOn: ['degenerate-uv'],
      overrides: [{ files: ['props/**'], limits: { 'degenerate-uv': 1 } }, { files: ['**/crate.glb'], limits: { 'degenerate-uv': 3 } }],
    });
    expect((await audit(project, ['props/crate.glb'])).code).toBe(0);
    writeConfig(project, {
      failOn: ['degenerate-uv'],
      overrides: [{ files: ['**/crate.glb'], limits: { 'degenerate-uv': 3 } }, { files: ['props/**'], limits: { 'degenerate-uv': 1 } }],
    });
    expect((await audit(project, ['props/crate.glb'])).code).toBe(1);
  });

  it('waiversLetAGateThroughWithTheirReasonInEveryReport', async () => {
    writeConfig(project, {
      failOn: ['degenerate-uv'],
      waivers: [{ files: ['props/legacy/**'], gates: ['degenerate-uv'], reason: 'collapsed on purpose, replaced next sprint' }],
    });
    const r = await runCli(
      ['audit', 'props', '--report', '../w.json', '--junit', '../w.xml', '--html', '../w.html', '--jobs', '1'],
      project,
    );
    expect(r.code).toBe(1); // crate still trips
    const report = JSON.parse(fs.readFileSync(path.join(root, 'w.json'), 'utf8'));
    const files = byInput(report);
    expect(files['props/legacy/old.glb'].gates).toEqual([]);
    expect(files['props/legacy/old.glb'].waived).toEqual([{ gate: 'degenerate-uv', reason: 'collapsed on purpose, replaced next sprint' }]);
    expect(files['props/crate.glb'].waived).toEqual([]);
    expect(r.stdout).toContain('waived: degenerate-uv 5 > 0 (collapsed on purpose, replaced next sprint)');
    expect(fs.readFileSync(path.join(root, 'w.xml'), 'utf8')).toContain('<system-out>waived: degenerate-uv 5 &gt; 0 (collapsed on purpose, replaced next sprint)</system-out>');
    expect(fs.readFileSync(path.join(root, 'w.html'), 'utf8')).toContain('waived: degenerate-uv 5 &gt; 0 \u2014 collapsed on purpose, replaced next sprint');
  });

  it('bakeReadsTheSameFile', async () => {
    writeConfig(project, {
      failOn: ['degenerate-uv'],
      waivers: [{ files: ['props/legacy/**'], gates: ['degenerate-uv'], reason: 'kept as it is' }],
    });
    const gated = await runCli(['bake', 'props/crate.glb', '--dry-run', '--json', '--jobs', '1'], project);
    expect(gated.code).toBe(1);
    expect(JSON.parse(gated.stdout).files[0].gates).toEqual(['degenerate-uv']);
    const waived = await runCli(['bake', 'props/legacy/old.glb', '--dry-run', '--json', '--jobs', '1'], project);
    expect(waived.code).toBe(0);
    expect(JSON.parse(waived.stdout).files[0].waived).toEqual([{ gate: 'degenerate-uv', reason: 'kept as it is' }]);
  });

  it('configAndNoConfigChooseTheFile', async () => {
    writeConfig(project, { failOn: ['degenerate-uv'] });
    const other = path.join(root, 'strict.json');
    fs.writeFileSync(other, JSON.stringify({ schema: 'tanframe-config/1', failOn: ['degenerate-uv'], limits: { 'degenerate-uv': 3 } }));
    expect((await audit(project, ['props/crate.glb'])).code).toBe(1);
    expect((await audit(project, ['props/crate.glb', '--config', '../strict.json'])).code).toBe(0);
    expect((await audit(project, ['props/crate.glb', '--no-config'])).code).toBe(0);
    const r = await runCli(['audit', 'props/crate.glb', '--config', '../absent.json'], project);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('tanframe: cannot read the config file ../absent.json: ENOENT\n');
  });

  it('anUnknownKeyOrABadValueIsAConfigurationErrorNamingTheKey', async () => {
    const cases: [unknown, RegExp][] = [
      [{ failOn: ['degenerate-uv'], limit: {} }, /^tanframe: tanframe\.config\.json: limit: unknown key\n$/],
      [{ overrides: [{ files: ['a/**'], uvs: 1 }] }, /overrides\[0\]\.uvs: unknown key/],
      [{ limits: { 'degenerate-uv': '2x' } }, /limits\.degenerate-uv: expected a count/],
      [{ limits: { 'no-such-gate': 1 } }, /limits\.no-such-gate: unknown gate 'no-such-gate'/],
      [{ failOn: ['degenerate-uv', 'typo'] }, /failOn: unknown gate 'typo'/],
      [{ method: 'fast' }, /method: expected 'mikktspace' or 'lengyel'/],
      [{ waivers: [{ files: ['x/**'], gates: ['uv-overlap'] }] }, /waivers\[0\]\.reason: missing/],
      [{ waivers: [{ files: ['x/**'], gates: ['uv-overlap'], reason: ' ' }] }, /waivers\[0\]\.reason: expected a non-empty string/],
      [{ schema: 'tanframe-config/2' }, /schema: expected "tanframe-config\/1"/],
      ['{ "failOn": [] }', /schema: missing/],
      [{ exclude: [] }, /exclude: expected at least one entry/],
      [{ failOn: ['uv-overlap', 'uv-overlap'] }, /failOn: a gate is named twice/],
      [{ uv: -1 }, /uv: expected an integer >= 0/],
      ['{ "failOn": [', /not valid JSON/],
    ];
    for (const [config, message] of cases) {
      writeConfig(project, config);
      const r = await runCli(['audit', 'props/crate.glb', '--report', '../never.json'], project);
      expect(r.code, String(message)).toBe(2);
      expect(r.stderr, String(message)).toMatch(message);
      expect(r.stderr.split('\n').filter(Boolean), String(message)).toHaveLength(1);
      expect(r.stdout, String(message)).toBe('');
      expect(fs.existsSync(path.join(root, 'never.json')), String(message)).toBe(false);
    }
    fs.rmSync(path.join(project, 'tanframe.config.json'));
  });

  it('theExampleConfigOfTheDesignIsAccepted', async () => {
    // The example of DESIGN.md, "Config", verbatim.
    writeConfig(project, {
      schema: 'tanframe-config/1',
      method: 'mikktspace', weight: 'derivative', uv: 0, allPrimitives: false,
      failOn: ['degenerate-uv', 'invalid-values'], limits: { 'tangent-mismatch': '0.5%', 'degenerate-uv': 2 },
      tolerance: 1, uvEpsilon: 1e-7, exclude: ['third_party/**'],
      overrides: [{ files: ['characters/**'], uv: 1, limits: { 'degenerate-uv': 0 } }],
      waivers: [{ files: ['props/legacy/**'], gates: ['uv-overlap'], reason: 'shared atlas, on purpose' }],
    });
    const r = await audit(project, ['.']);
    expect(r.stderr).toBe('');
    const files = byInput(r.report);
    expect(Object.keys(files).sort()).toEqual(['characters/hero.glb', 'props/crate.glb', 'props/legacy/old.glb']);
    expect(files['characters/hero.glb'].primitives[0].uvSet).toBe(1); // override: uv 1
    expect(files['characters/hero.glb'].status).toBe('unchecked'); // the grid has no TEXCOORD_1
    expect(files['props/crate.glb'].gates).toEqual(['degenerate-uv']); // 3 > 2
    fs.rmSync(path.join(project, 'tanframe.config.json'));
  });
});
