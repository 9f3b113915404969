/**
 * Where `bake -o` puts each output and in which container.
 * Based on: DESIGN.md, Command line (with one input file `-o` names a file, otherwise a folder
 * mirroring the inputs' layout; `--format` default: the input's, GLB for OBJ). Our rules where
 * it is silent: an extension on `-o` decides the container and must agree with `--format`;
 * `-o` without an extension, ending in a separator or naming an existing folder is a folder.
 */
import * as fs from 'node:fs';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';

/** Containers a bake can write (OBJ cannot hold tangents). */
const CONTAINERS = ['.glb', '.gltf'];

/** What `-o` names: one output file (and its container) or a folder to mirror the inputs under. */
export type OutputTarget =
  | { kind: 'file'; path: string; format: 'glb' | 'gltf' }
  | { kind: 'folder'; path: string };

/**
 * Decides what `out` (the -o value, relative to `cwd`) names. `singleFile`: the run has one
 * input and it was named as a file. `format`: --format, or null. Throws TanframeError 'usage'
 * when `-o` ends in .obj (no container for tangents), in an extension that contradicts
 * `--format`, in another extension (not a container; a trailing separator names a folder), or
 * names a file while the run has several inputs or a folder or pattern.
 */
export function outputTarget(out: string, cwd: string, singleFile: boolean, format: 'glb' | 'gltf' | null): OutputTarget {
  const abs = path.resolve(cwd, out);
  const isFolder = /[\\/]$/.test(out) || isDirectory(abs);
  if (isFolder) return { kind: 'folder', path: abs };
  const ext = path.extname(abs).toLowerCase();
  if (ext === '.obj') throw new TanframeError('usage', `-o ${out}: OBJ cannot hold tangents; name a .glb or .gltf file (or a folder)`);
  if (ext === '') return { kind: 'folder', path: abs };
  if (!CONTAINERS.includes(ext)) {
    throw new TanframeError('usage', `-o ${out}: '${ext}' is not an output container (.glb or .gltf); end the path with '/' to name a folder`);
  }
  if (!singleFile) throw new TanframeError('usage', `-o ${out} names a file, but the run has several inputs, a folder or a pattern: name a folder`);
  const fromExt = ext.slice(1) as 'glb' | 'gltf';
  if (format && format !== fromExt) throw new TanframeError('usage', `-o ${out} says ${fromExt} but --format says ${format}`);
  return { kind: 'file', path: abs, format: fromExt };
}

function isDirectory(p: string): boolean {
  try {
    return fs.statSync(p).isDirectory();
  } catch {
    return false;
  }
}

/** `relative` with the extension of the container it is written in: --format, else the input's, .glb for OBJ. */
export function outputRelativeName(relative: string, format: 'glb' | 'gltf' | null): string {
  const ext = path.extname(relative);
  const target = format ? `.${format}` : ext.toLowerCase() === '.obj' ? '.glb' : ext;
  return relative.slice(0, relative.length - ext.length) + target;
}

/** The container of an output path: .gltf is glTF JSON, anything else GLB. */
export function containerOf(output: string): 'glb' | 'gltf' {
  return path.extname(output).toLowerCase() === '.gltf' ? 'gltf' : 'glb';
}
