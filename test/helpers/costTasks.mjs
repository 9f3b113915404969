/**
 * Ready tasks for the cost harness (test/helpers/costGrowth.ts): each is called in a child
 * process as fn(folder, ...args) on the folder holding one size's files. A task refuses an
 * input by throwing a TanframeError or returning `{ refused: code }`.
 * They run the built library (dist/; `npm test` builds first): loading the TypeScript sources
 * through the test hooks costs seconds per child process.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { pathToFileURL } from 'node:url';

// COST_DIST names another build's dist/index.js (to measure an older build against this one);
// the command line is the cli/main.js beside it.
const libUrl = process.env.COST_DIST ? pathToFileURL(process.env.COST_DIST).href : new URL('../../dist/index.js', import.meta.url).href;
const lib = await import(libUrl);
const { convertNormalMap, decodePng, defaultProcessOptions, mapPartsForAsset, processFile, readAsset: readAssetFile } = lib;
const { main } = await import(new URL('./cli/main.js', libUrl).href);

/** Runs `tanframe <argv> --json` in-process in `dir`; a failed file is refused with its report code. */
export async function cliJson(dir, ...argv) {
  let stdout = '';
  let stderr = '';
  const code = await main([...argv, '--json'], {
    stdout: (t) => { stdout += t; },
    stderr: (s) => { stderr += s; },
    cwd: dir,
    isTTY: false,
    env: {},
    stderrIsTTY: false,
  });
  let report;
  try {
    report = JSON.parse(stdout);
  } catch {
    throw new Error(`tanframe ${argv.join(' ')} exited ${code} without a JSON report: ${stderr.slice(0, 2000)}`);
  }
  const failed = report.files.find((f) => f.status === 'failed');
  if (failed) {
    if (failed.error.code === 'internal') throw new Error(`internal error: ${failed.error.message}`);
    return { refused: failed.error.code, detail: failed.error.message };
  }
  return {};
}

/** Reads `file` (relative to dir) into an Asset, nothing more. */
export async function readAsset(dir, file) {
  await readAssetFile(path.join(dir, file));
}

/**
 * Audits `file` through processFile (read, solve, diagnose), in-process; a failure refuses.
 * `options` overrides ProcessOptions fields (e.g. { allPrimitives: true }).
 */
export async function auditFile(dir, file, options = {}) {
  const input = path.join(dir, file);
  const r = await processFile(
    { command: 'audit', input, output: null, format: null, dryRun: true, displayInput: file, displayOutput: null },
    { ...defaultProcessOptions(), ...options },
  );
  if (r.status === 'failed') {
    if (r.error.code === 'internal') throw new Error(`internal error: ${r.error.message}`);
    return { refused: r.error.code, detail: r.error.message };
  }
  return {};
}

/** Decodes the PNG `file` (relative to dir). */
export async function decodePngFile(dir, file) {
  decodePng(new Uint8Array(fs.readFileSync(path.join(dir, file))));
}

/**
 * Converts the tangent-space map `png` to object space over the mesh `mesh` (both relative to
 * dir) through the library calls `convert-map` makes; a TanframeError refuses.
 */
export async function convertMapFiles(dir, mesh, png) {
  const image = decodePng(new Uint8Array(fs.readFileSync(path.join(dir, png))));
  const asset = await readAssetFile(path.join(dir, mesh));
  const selection = mapPartsForAsset(asset, {
    imageName: png, from: 'tangent', to: 'object', fromMethod: 'mikktspace', toMethod: 'mikktspace', uv: null, primitives: null,
  });
  convertNormalMap(image, selection.parts, { from: 'tangent', to: 'object', inGreen: 'up', outGreen: 'up', padding: 0 });
}
