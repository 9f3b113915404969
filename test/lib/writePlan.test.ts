/**
 * WritePlan on its own: paths compare by real path (links, `..`), by folded case where the
 * folder ignores case, and every conflict is one line naming both paths.
 */
import * as fs from 'node:fs';
import * as os from 'node:os';
import * as path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WritePlan } from '../../src/lib/writePlan.js';

let tmp = '';
beforeAll(() => {
  tmp = fs.realpathSync(fs.mkdtempSync(path.join(os.tmpdir(), 'tanframe-writeplan-')));
});
afterAll(() => {
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('WritePlan', () => {
  it('compares through symbolic links and `..`', () => {
    const dir = path.join(tmp, 'links');
    fs.mkdirSync(path.join(dir, 'real'), { recursive: true });
    fs.writeFileSync(path.join(dir, 'real', 'a.glb'), 'x');
    fs.symlinkSync(path.join(dir, 'real'), path.join(dir, 'alias'));
    const plan = new WritePlan(dir);
    plan.read(path.join(dir, 'real', 'a.glb'), path.join(dir, 'real', 'a.glb'));
    expect(() => plan.write(path.join(dir, 'alias', 'sub', '..', 'a.glb'), '--report alias/a.glb')).toThrow(
      /--report alias\/a\.glb would overwrite real\/a\.glb, which the run reads/,
    );
    // A file not yet on disk, under a linked folder: the same file as under the real folder.
    plan.write(path.join(dir, 'alias', 'new.json'), '--report alias/new.json');
    expect(() => plan.write(path.join(dir, 'real', 'new.json'), '--junit real/new.json')).toThrow(
      /--junit real\/new\.json and --report alias\/new\.json are the same file/,
    );
  });

  it('folds case in a folder where the name in the other case is the same file', () => {
    // On a case-insensitive file system `Scene.BIN` and `sCENE.bin` are one file. This Linux
    // test file system is case-sensitive, so the situation is made with a hard link: both
    // names lead to one inode, which is exactly what the plan's probe looks for.
    const dir = path.join(tmp, 'folds');
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'Scene.BIN'), 'x');
    fs.linkSync(path.join(dir, 'Scene.BIN'), path.join(dir, 'sCENE.bin'));
    const plan = new WritePlan(dir);
    plan.read(path.join(dir, 'Scene.BIN'), 'in.gltf');
    expect(plan.key(path.join(dir, 'sCENE.bin'))).toBe(plan.key(path.join(dir, 'Scene.BIN')));
    expect(() => plan.write(path.join(dir, 'sCENE.bin'), '--report sCENE.bin')).toThrow(/would overwrite Scene\.BIN, which the run reads/);
  });

  it('keeps case apart where the folder tells names apart', () => {
    const dir = path.join(tmp, 'sensitive');
    fs.mkdirSync(dir, { recursive: true });
    fs.writeFileSync(path.join(dir, 'Scene.BIN'), 'x');
    fs.writeFileSync(path.join(dir, 'sCENE.bin'), 'y');
    const plan = new WritePlan(dir);
    expect(plan.key(path.join(dir, 'sCENE.bin'))).not.toBe(plan.key(path.join(dir, 'Scene.BIN')));
  });
});
