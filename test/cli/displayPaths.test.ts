/**
 * Paths in reports: each input as the user named it, a discovered file as the named folder
 * plus its relative path, the same strings in the JSON report, and UV picture names without
 * `up_` chains, whatever the working folder.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../helpers/cli.js';
import { cornerUv, gridAsset, setCornerUv, writeGridGlb } from '../helpers/gridAsset.js';
import { displayPath } from '../../src/io/inputs.js';

let tmp = '';
let deep = '';
beforeAll(async () => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-display-')));
  // assets/clean.glb and assets/sub/bad.glb (one degenerate UV triangle: a picture is drawn).
  await writeGridGlb(path.join(tmp, 'assets'), 'clean', gridAsset(2));
  const bad = gridAsset(2);
  setCornerUv(bad, 1, 2, cornerUv(bad, 1, 0));
  await writeGridGlb(path.join(tmp, 'assets', 'sub'), 'bad', bad);
  deep = path.join(tmp, 'a', 'b', 'c');
  fs.mkdirSync(deep, { recursive: true });
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

function inputsOf(file: string): string[] {
  return JSON.parse(fs.readFileSync(file, 'utf8')).files.map((f: any) => f.input);
}

describe('displayPath', () => {
  it('joinsTheNamedFolderAndTheRelativePath', () => {
    expect(displayPath('assets', 'sub/x.glb')).toBe('assets/sub/x.glb');
    expect(displayPath('assets/', 'x.glb')).toBe('assets/x.glb');
    expect(displayPath('./assets', 'x.glb')).toBe('./assets/x.glb');
    expect(displayPath('.', 'x.glb')).toBe('x.glb');
    expect(displayPath('/', 'x.glb')).toBe('/x.glb');
    expect(displayPath('/abs/dir', 'x.glb')).toBe('/abs/dir/x.glb');
  });
});

describe('inputs in reports', () => {
  it('showsAnAbsoluteFolderAsNamedFromAnyWorkingFolder', async () => {
    const abs = path.join(tmp, 'assets');
    // Two working folders at different depths give the same strings (no ../.. chains).
    for (const cwd of [tmp, deep]) {
      const r = await runCli(['audit', abs, '--jobs', '1', '--quiet', '--report', path.join(tmp, 'abs.json')], cwd);
      expect(r.code).toBe(0);
      expect(inputsOf(path.join(tmp, 'abs.json'))).toEqual([`${abs}/clean.glb`, `${abs}/sub/bad.glb`]);
    }
  });

  it('showsARelativeFolderFileAndGlobAsNamed', async () => {
    const r = await runCli(['audit', 'assets/', './assets/sub/bad.glb', '--jobs', '1', '--report', 'rel.json'], tmp);
    expect(r.code).toBe(0);
    // The same file named twice is listed once, under its first name (the folder walk).
    expect(inputsOf(path.join(tmp, 'rel.json'))).toEqual(['assets/clean.glb', 'assets/sub/bad.glb']);
    expect(r.stdout).toContain('assets/sub/bad.glb');
    const file = await runCli(['audit', './assets/sub/bad.glb', '--jobs', '1', '--quiet', '--report', 'file.json'], tmp);
    expect(file.code).toBe(0);
    expect(inputsOf(path.join(tmp, 'file.json'))).toEqual(['./assets/sub/bad.glb']);
    const glob = await runCli(['audit', 'assets/**/*.glb', '--jobs', '1', '--quiet', '--report', 'glob.json'], tmp);
    expect(glob.code).toBe(0);
    expect(inputsOf(path.join(tmp, 'glob.json'))).toEqual(['assets/clean.glb', 'assets/sub/bad.glb']);
  });

  it('showsBakeOutputsUnderTheNamedOutFolder', async () => {
    const out = path.join(tmp, 'baked');
    const r = await runCli(['bake', path.join(tmp, 'assets'), '-o', out, '--jobs', '1', '--quiet', '--report', 'bake.json'], deep);
    expect(r.code).toBe(0);
    const files = JSON.parse(fs.readFileSync(path.join(deep, 'bake.json'), 'utf8')).files;
    expect(files.map((f: any) => f.output)).toEqual([`${out}/clean.glb`, `${out}/sub/bad.glb`]);
    expect(fs.existsSync(path.join(out, 'sub', 'bad.glb'))).toBe(true);
  });

  it('namesUvPicturesWithoutUpChains', async () => {
    const maps = path.join(tmp, 'maps');
    const r = await runCli(['audit', '../../../assets', '--jobs', '1', '--quiet', '--uv-maps', maps], deep);
    expect(r.code).toBe(0);
    expect(fs.readdirSync(maps)).toEqual(['assets_sub_bad.glb__m0p0.svg']);
  });
});
