/**
 * Ready tasks for the cost harness (test/helpers/costGrowth.ts): each is called in a child
 * process as fn(folder, ...args) on the folder holding one size's files. A task refuses an
 * input by throwing a TanframeError or returning `{ refused: code }`.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { main } from '../../src/cli/main.js';
import { convertNormalMap } from '../../src/imaging/convert.js';
import { decodePng } from '../../src/imaging/png.js';
import { mapPartsForAsset } from '../../src/lib/mapFrames.js';
import { defaultProcessOptions } from '../../src/lib/options.js';
import { processFile, readAsset as readAssetFile } from '../../src/lib/processFile.js';
import { TS_WORKER } from './cli.js';

/** Runs `tanframe <argv> --json` in-process in `dir`; a failed file is refused with its report code. */
export async function cliJson(dir: string, ...argv: string[]): Promise<{ refused?: string; detail?: string }> {
  let stdout = '';
  let stderr = '';
  const code = await main([...argv, '--json'], {
    stdout: (s) => { stdout += s; },
    stderr: (s) => { stderr += s; },
    cwd: dir,
    isTTY: false,
    env: {},
    stderrIsTTY: false,
    workerScript: TS_WORKER,
  });
  let report: any;
  try {
    report = JSON.parse(stdout);
  } catch {
    throw new Error(`tanframe ${argv.join(' ')} exited ${code} without a JSON report: ${stderr.slice(0, 2000)}`);
  }
  const failed = report.files.find((f: any) => f.status === 'failed');
  if (failed) {
    if (failed.error.code === 'internal') throw new Error(`internal error: ${failed.error.message}`);
    return { refused: failed.error.code, detail: failed.error.message };
  }
  return {};
}

/** Reads `file` (relative to dir) into an Asset, nothing more. */
export async function readAsset(dir: string, file: string): Promise<void> {
  await readAssetFile(path.join(dir, file));
}

/** Audits `file` through processFile (read, solve, diagnose), in-process; a failure refuses. */
export async function auditFile(dir: string, file: string): Promise<{ refused?: string; detail?: string }> {
  const input = path.join(dir, file);
  const r = await processFile(
    { command: 'audit', input, output: null, format: null, dryRun: true, displayInput: file, displayOutput: null },
    defaultProcessOptions(),
  );
  if (r.status === 'failed') {
    if (r.error!.code === 'internal') throw new Error(`internal error: ${r.error!.message}`);
    return { refused: r.error!.code, detail: r.error!.message };
  }
  return {};
}

/** Decodes the PNG `file` (relative to dir). */
export async function decodePngFile(dir: string, file: string): Promise<void> {
  decodePng(new Uint8Array(fs.readFileSync(path.join(dir, file))));
}

/**
 * Converts the tangent-space map `png` to object space over the mesh `mesh` (both relative to
 * dir) through the library calls `convert-map` makes; a TanframeError refuses.
 */
export async function convertMapFiles(dir: string, mesh: string, png: string): Promise<void> {
  const image = decodePng(new Uint8Array(fs.readFileSync(path.join(dir, png))));
  const asset = await readAssetFile(path.join(dir, mesh));
  const selection = mapPartsForAsset(asset, {
    imageName: png, from: 'tangent', to: 'object', fromMethod: 'mikktspace', toMethod: 'mikktspace', uv: null, primitives: null,
  });
  convertNormalMap(image, selection.parts, { from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 0 });
}
