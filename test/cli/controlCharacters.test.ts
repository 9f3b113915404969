/**
 * Strings from files never reach a terminal, a log line or XML raw: mesh names, extension
 * names, asset.version and file names holding ESC, OSC, BEL or newlines come out as visible
 * escapes (src/mesh/text.ts), one line each, and --uv-maps / --junit / --html stay well-formed.
 */
import { spawnSync } from 'node:child_process';
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { GltfBuilder, glbBytes } from '../helpers/gltfBuilder.js';
import { cornerUv, gridAsset, setCornerUv } from '../helpers/gridAsset.js';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-ctl-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

const hasXmllint = spawnSync('xmllint', ['--version']).status === 0;
if (!hasXmllint) console.warn('SKIPPED (in part): xmllint is not installed; the well-formedness checks did not run');

/** C0 controls but newline, DEL and C1 controls: what a terminal acts on (ECMA-48). */
const RAW_CONTROL = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f]/;
/** Characters XML 1.0 forbids (section 2.2). Source: XML 1.0 Fifth Edition. */
const NOT_XML = /[^\t\n\r\u0020-\uD7FF\uE000-\uFFFD\u{10000}-\u{10FFFF}]/u;

const EVIL = '\u001b]0;owned\u0007\u001b[2J\u009b';

/** A 2 x 2 grid GLB with one UV overlap (so it gets a UV picture); `edit` changes its JSON. */
function gridGlb(edit: (json: any) => void): Uint8Array {
  const g = gridAsset(2);
  setCornerUv(g, 2, 2, cornerUv(g, 2, 0)); // t2 degenerate: a finding, so a picture is drawn
  const b = new GltfBuilder();
  b.addPrimitive({
    attributes: { POSITION: { array: g.positions, type: 'VEC3' }, NORMAL: { array: g.normals, type: 'VEC3' }, TEXCOORD_0: { array: g.uvs, type: 'VEC2' } },
    indices: g.indices,
  });
  const { json, bin } = b.build();
  edit(json);
  return glbBytes(json, bin);
}

describe('control characters from files', () => {
  it('come out escaped on stdout and stderr, one line per failure, and in well-formed XML', async () => {
    const dir = path.join(tmp, 'in');
    fs.mkdirSync(dir);
    fs.writeFileSync(path.join(dir, 'named.glb'), gridGlb((j) => { j.meshes[0].name = `hull${EVIL}`; }));
    fs.writeFileSync(path.join(dir, 'ext.glb'), gridGlb((j) => { j.extensionsUsed = [`EXT_${EVIL}`]; j.extensionsRequired = [`EXT_${EVIL}`]; }));
    fs.writeFileSync(path.join(dir, 'version.glb'), gridGlb((j) => { j.asset.version = `2.0${EVIL}`; }));
    // A file name with a newline would forge a second log line if printed raw.
    fs.writeFileSync(path.join(dir, 'forged\ntanframe: x.glb: ok.glb'), gridGlb((j) => { j.extensionsRequired = ['EXT_unknown']; j.extensionsUsed = ['EXT_unknown']; }));
    const r = await runCli(['audit', 'in', '--uv-maps', 'maps', '--junit', 'j.xml', '--html', 'h.html', '--jobs', '1', '--all-primitives'], tmp);
    expect(r.stdout).not.toMatch(RAW_CONTROL);
    expect(r.stderr).not.toMatch(RAW_CONTROL);
    expect(r.stdout).toContain('\\u001b]0;owned\\u0007');
    // Three files fail (extension, version, and the forged name's unknown extension): three lines.
    const lines = r.stderr.split('\n').filter((l) => l !== '');
    expect(lines, r.stderr).toHaveLength(3);
    expect(lines.some((l) => l.startsWith('tanframe: in/forged\\u000atanframe: x.glb: ok.glb: '))).toBe(true);
    expect(lines.some((l) => l.includes('EXT_\\u001b]0;owned\\u0007\\u001b[2J\\u009b'))).toBe(true);
    for (const f of ['j.xml', 'h.html', ...fs.readdirSync(path.join(tmp, 'maps')).map((m) => path.join('maps', m))]) {
      const text = fs.readFileSync(path.join(tmp, f), 'utf8');
      expect(text, f).not.toMatch(NOT_XML);
      expect(text, f).not.toMatch(RAW_CONTROL);
    }
    const svgs = fs.readdirSync(path.join(tmp, 'maps'));
    expect(svgs).toEqual(['in_named.glb__m0p0.svg']);
    expect(fs.readFileSync(path.join(tmp, 'maps', svgs[0]), 'utf8')).toContain('hull\\u001b]0;owned\\u0007');
    // --json prints the same names as JSON escapes (C1 controls too), and they parse back.
    const j = await runCli(['audit', 'in', '--json', '--jobs', '1', '--all-primitives'], tmp);
    expect(j.stdout).not.toMatch(RAW_CONTROL);
    const named = JSON.parse(j.stdout).files.find((f: any) => f.input === 'in/named.glb');
    expect(named.primitives[0].meshName).toBe(`hull${EVIL}`);
    if (hasXmllint) {
      for (const f of ['j.xml', path.join('maps', svgs[0])]) {
        const v = spawnSync('xmllint', ['--noout', path.join(tmp, f)], { encoding: 'utf8' });
        expect(v.status, `${f}: ${v.stderr}`).toBe(0);
      }
    }
  });
});
