// The --junit file: one test case per input file, checked against a JUnit XML schema with
// xmllint (Debian's libxml2-utils; .ci/run installs it) and read back with XPath.
import { execFileSync, spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { renderJunit, xmlText } from '../../src/report/junit.js';
import { buildReport } from '../../src/report/json.js';

const schema = path.join(__dirname, 'junit.xsd');
const hasXmllint = spawnSync('xmllint', ['--version']).status === 0;
if (!hasXmllint) console.warn('SKIPPED: xmllint is not installed (apt-get install libxml2-utils); the JUnit schema checks did not run');

/** Runs xmllint's schema check; returns its exit status and messages. */
function validate(file: string): { status: number; out: string } {
  const r = spawnSync('xmllint', ['--noout', '--schema', schema, file], { encoding: 'utf8' });
  return { status: r.status ?? -1, out: `${r.stdout}${r.stderr}` };
}

function xpath(file: string, expr: string): string {
  return execFileSync('xmllint', ['--xpath', expr, file], { encoding: 'utf8' }).trim();
}

let tmp = '';
beforeAll(async () => {
  tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-junit-'));
  const dir = path.join(tmp, 'assets');
  await writeGridGlb(dir, 'a-clean', gridAsset(4));
  const bad = gridAsset(4);
  // Triangles 3 and 9: all three UVs on one point.
  for (const t of [3, 9]) for (const k of [1, 2]) setCornerUv(bad, t, k, cornerUv(bad, t, 0));
  await writeGridGlb(dir, 'b-degenerate & "odd" <name>', bad);
  fs.writeFileSync(path.join(dir, 'c-truncated.glb'), fs.readFileSync(path.join(dir, 'a-clean.glb')).subarray(0, 40));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe.skipIf(!hasXmllint)('junit file', () => {
  it('validatesAgainstTheSchemaWithOneCasePerFile', async () => {
    const out = path.join(tmp, 'junit.xml');
    const r = await runCli(['audit', 'assets', '--fail-on', 'degenerate-uv', '--junit', out, '--quiet'], tmp);
    expect(r.code).toBe(3); // one file could not be read
    const v = validate(out);
    expect(v.status, v.out).toBe(0);
    expect(xpath(out, 'count(//testsuite/testcase)')).toBe('3');
    expect(xpath(out, 'string(//testsuite/@tests)')).toBe('3');
    expect(xpath(out, 'string(//testsuite/@failures)')).toBe('1');
    expect(xpath(out, 'string(//testsuite/@errors)')).toBe('1');
    // Clean file: a passing case with no child.
    expect(xpath(out, 'count(//testcase[@name="assets/a-clean.glb"]/*)')).toBe('0');
    // Gate: a failure naming the gate and the first triangles (the file name escaped and read back intact).
    const gated = '//testcase[@name=\'assets/b-degenerate & "odd" <name>.glb\']/failure';
    expect(xpath(out, `string(${gated}/@type)`)).toBe('degenerate-uv');
    expect(xpath(out, `string(${gated}/@message)`)).toBe('gates tripped: degenerate-uv (2 triangles; first: 3, 9)');
    expect(xpath(out, `string(${gated})`)).toContain('mesh 0 "b-degenerate & "odd" <name>" primitive 0: 2 degenerate UV triangles; first triangles: 3, 9');
    // Unreadable file: an error with its code and message.
    const err = '//testcase[@name="assets/c-truncated.glb"]/error';
    expect(xpath(out, `string(${err}/@type)`)).toBe('bad-glb');
    expect(xpath(out, `string(${err}/@message)`)).toMatch(/^bad-glb: /);
  });

  it('theSchemaRejectsAFileWithoutCounts', () => {
    // The check has teeth: a testsuite without its required counts does not validate.
    const file = path.join(tmp, 'broken.xml');
    fs.writeFileSync(file, '<?xml version="1.0"?>\n<testsuites><testsuite name="x"><testcase name="a"/></testsuite></testsuites>\n');
    expect(validate(file).status).not.toBe(0);
  });

  it('controlCharactersInNamesStayValidXml', () => {
    const report = buildReport('audit', '0.0.0', 'mikktspace', {}, [
      { input: 'we\u0001ird\u0000.glb', output: null, status: 'failed', error: { code: 'bad-glb', message: 'bad \u001b[31m' }, gates: [], primitives: [], warnings: [], seconds: 0.5 },
    ], 1);
    const file = path.join(tmp, 'control.xml');
    fs.writeFileSync(file, renderJunit(report));
    const v = validate(file);
    expect(v.status, v.out).toBe(0);
    // Control characters are written as visible escapes (the one sanitiser, src/mesh/text.ts).
    expect(xpath(file, 'string(//testcase/@name)')).toBe('we\\u0001ird\\u0000.glb');
    expect(xpath(file, 'string(//testcase/error/@message)')).toBe('bad-glb: bad \\u001b[31m');
  });
});

describe('xmlText', () => {
  it('escapesMarkupCharacters', () => {
    expect(xmlText('a & b < c > d "e"')).toBe('a &amp; b &lt; c &gt; d &quot;e&quot;');
  });
});
