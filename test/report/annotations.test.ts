/**
 * `--annotate github`: GitHub Actions workflow commands (`::error file=...,title=...::...`),
 * one per tripped gate and per failed file, escaped as workflow commands require, printed on
 * stdout after the summary.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { errorCommand, escapeCommandData, escapeCommandProperty, renderGithubAnnotations } from '../../src/report/annotations.js';
import { buildReport } from '../../src/report/json.js';
import type { FileReport, PrimitiveReport } from '../../src/report/types.js';

describe('source lines', () => {
  it('pointsAnObjGateAtTheLineOfItsFirstListedFace', async () => {
    // Source: GitHub's workflow-command documentation (from memory): `line` is a property of
    // ::error beside `file`. A good triangle on line 7, one with three equal vt on line 8.
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-annotate-obj-'));
    try {
      fs.writeFileSync(path.join(dir, 'sliver.obj'), 'v 0 0 0\nv 1 0 0\nv 1 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nf 1/1 2/2 3/3\nf 1/1 2/1 3/1\n');
      const r = await runCli(['audit', 'sliver.obj', '--fail-on', 'degenerate-uv', '--annotate', 'github', '--quiet'], dir);
      expect(r.code).toBe(1);
      expect(r.stdout).toMatch(/^::error file=sliver\.obj,line=8,title=tanframe%3A degenerate-uv::/m);
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('escaping', () => {
  it('escapesPercentAndLineBreaksInMessagesAndAlsoColonAndCommaInProperties', () => {
    // Source: GitHub's workflow-command documentation and the Actions toolkit's escaping
    // (from memory): data %, CR, LF; properties also ':' and ','.
    expect(escapeCommandData('50% done\r\nnext: a, b')).toBe('50%25 done%0D%0Anext: a, b');
    expect(escapeCommandProperty('dir,1/a:b%.glb\n')).toBe('dir%2C1/a%3Ab%25.glb%0A');
    expect(errorCommand([['file', 'a,b.glb'], ['title', 't: x']], 'm\nn')).toBe('::error file=a%2Cb.glb,title=t%3A x::m%0An');
  });

  it('keepsEveryCommandOnOneLineWithNoControlCharactersWhateverTheFileName', () => {
    // Control characters from names and messages go through the sanitiser (visible \uXXXX);
    // then the workflow-command escaping applies to what is left.
    const nasty = 'odd\nname,with:colons%\u001b[31m.glb';
    const failed: FileReport = {
      input: nasty, output: null, status: 'failed', error: { code: 'bad-glb', message: 'bad magic\r\nsecond line' },
      gates: [], primitives: [], warnings: [], notes: [], seconds: 0,
    };
    const text = renderGithubAnnotations(buildReport('audit', '0.0.0', 'mikktspace', {}, [failed], 0));
    expect(text.split('\n')).toEqual([
      '::error file=odd\\u000aname%2Cwith%3Acolons%25\\u001b[31m.glb,title=tanframe%3A cannot process (bad-glb)::bad magic\\u000d\\u000asecond line',
      '',
    ]);
    expect(text).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f]/);
  });
});

/** A checked primitive with `degenerate` degenerate-UV triangles and `overlap` overlapping ones. */
function primitive(mesh: number, degenerate: number[], overlap: number[]): PrimitiveReport {
  const finding = (t: number[]) => ({ count: t.length, triangles: t });
  return {
    mesh, meshName: `m${mesh}`, primitive: 0, material: 0, uvSet: 0, normalMapped: true, method: 'mikktspace', action: 'baked', skipReason: null,
    triangles: 8, verticesIn: 24, verticesOut: 24, splitVertices: 0, mirrorSeamSplits: 0,
    degenerateUv: finding(degenerate), degenerateGeometry: finding([]), invalidValues: { count: 0 }, badNormals: { count: 0 },
    mirroredTriangles: 0, uvOverlap: finding(overlap), storedTangents: null, normalsGenerated: null, fallbackTangents: 0,
  };
}

describe('renderGithubAnnotations', () => {
  it('writesOnePerTrippedGateAndPerFailedFileInReportOrder', () => {
    const file = (input: string, gates: string[], primitives: PrimitiveReport[]): FileReport => ({
      input, output: null, status: 'ok', error: null, gates, primitives, warnings: [], notes: [], seconds: 0,
    });
    const files: FileReport[] = [
      file('props/a.glb', ['degenerate-uv', 'uv-overlap'], [primitive(0, [3, 5], [1])]),
      { ...file('props/b.glb', [], []), status: 'failed', error: { code: 'bad-json', message: 'unexpected end of the JSON text' } },
      file('props/c.glb', [], [primitive(0, [], [])]),
      file('props/d.glb', [], [primitive(0, [2], [])]), // a finding, no gate asked for it: nothing
    ];
    const lines = renderGithubAnnotations(buildReport('audit', '0.0.0', 'mikktspace', {}, files, 0)).split('\n');
    expect(lines).toEqual([
      '::error file=props/a.glb,title=tanframe%3A degenerate-uv::gate degenerate-uv tripped%0Amesh 0 "m0" primitive 0: 2 degenerate UV triangles; first triangles: 3, 5',
      '::error file=props/a.glb,title=tanframe%3A uv-overlap::gate uv-overlap tripped%0Amesh 0 "m0" primitive 0: 1 overlapping UV triangles; first triangles: 1',
      '::error file=props/b.glb,title=tanframe%3A cannot process (bad-json)::unexpected end of the JSON text',
      '',
    ]);
  });

  it('isEmptyWhenNothingFailedOrTripped', () => {
    expect(renderGithubAnnotations(buildReport('audit', '0.0.0', 'mikktspace', {}, [], 0))).toBe('');
  });
});

describe('--annotate github through the CLI', () => {
  let tmp = '';
  beforeAll(async () => {
    tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-annotate-'));
    await writeGridGlb(path.join(tmp, 'in'), 'clean', gridAsset(2));
    const bad = gridAsset(2);
    setCornerUv(bad, 1, 2, cornerUv(bad, 1, 0)); // triangle 1 has no UV area
    await writeGridGlb(path.join(tmp, 'in'), 'bad', bad);
    fs.writeFileSync(path.join(tmp, 'in', 'broken.glb'), 'glTF?');
  });
  afterAll(() => {
    fs.rmSync(tmp, { recursive: true, force: true });
  });

  it('printsTheCommandsOnStdoutAfterTheSummary', async () => {
    const r = await runCli(['audit', 'in', '--fail-on', 'degenerate-uv', '--jobs', '1', '--file-timeout', '0', '--annotate', 'github'], tmp);
    expect(r.code).not.toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    const first = lines.findIndex((l) => l.startsWith('::'));
    expect(first).toBeGreaterThan(0);
    expect(lines.slice(0, first).some((l) => l.startsWith('total: '))).toBe(true); // the summary comes first
    expect(lines.slice(first)).toEqual([
      '::error file=in/bad.glb,title=tanframe%3A degenerate-uv::gate degenerate-uv tripped%0Amesh 0 "bad" primitive 0: 1 degenerate UV triangles; first triangles: 1',
      expect.stringMatching(/^::error file=in\/broken\.glb,title=tanframe%3A cannot process \([a-z-]+\)::\S/),
    ]);
    // With --quiet the summary goes, the annotations stay.
    const quiet = await runCli(['audit', 'in', '--fail-on', 'degenerate-uv', '--jobs', '1', '--file-timeout', '0', '--annotate', 'github', '--quiet'], tmp);
    expect(quiet.stdout.trimEnd().split('\n')).toEqual(lines.slice(first));
    // Without --annotate, no workflow command.
    const plain = await runCli(['audit', 'in', '--fail-on', 'degenerate-uv', '--jobs', '1', '--file-timeout', '0'], tmp);
    expect(plain.stdout).not.toContain('::error');
  });

  it('refusesJsonOnStdoutWithAnnotationsBeforeProcessingAnything', async () => {
    const r = await runCli(['bake', 'in', '-o', 'out', '--json', '--annotate', 'github'], tmp);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('tanframe: --annotate prints on stdout, where --json puts the report: use --report <file> with --annotate\n');
    expect(fs.existsSync(path.join(tmp, 'out'))).toBe(false);
    const other = await runCli(['audit', 'in', '--annotate', 'gitlab'], tmp);
    expect(other.code).toBe(2);
    expect(other.stderr).toContain("'gitlab' is invalid");
  });
});
