/**
 * The last check before a bake writes: every file it is about to write lands inside the
 * output's folder (symbolic links included), no two share a path, and none replaces a file
 * the input was read from unless the bake is in place.
 * Based on: DESIGN.md, Guarantees (outputs never outside -o; an input is never modified
 * unless --in-place); POSIX path resolution (realpath). Common practice.
 */
import * as fsp from 'node:fs/promises';
import * as path from 'node:path';
import type { Asset } from '../mesh/asset.js';
import { TanframeError } from '../mesh/errors.js';
import { fileHolds, outputLength, outputParts, type OutputFile } from '../io/files.js';
import { isBufferFileOf } from '../io/gltfWrite.js';
import { isInside, realPathOfNearestExisting, resolveResourceUri, uriToRelativePath } from '../io/uri.js';
import type { JobWrites } from './writePlan.js';

/** Real path of `p` through its deepest existing ancestor, or `p` itself when that fails. */
function realOrSelf(p: string): string {
  try {
    return realPathOfNearestExisting(p);
  } catch {
    return p;
  }
}

/** Every file the asset was read from: the input itself, external buffers and images (real paths). */
function inputFiles(asset: Asset, input: string): Set<string> {
  const out = new Set<string>([realOrSelf(path.resolve(input))]);
  const baseDir = path.dirname(path.resolve(input));
  if (asset.container !== 'obj' && Array.isArray(asset.json?.buffers)) {
    for (const b of asset.json.buffers) {
      if (typeof b?.uri !== 'string' || /^data:/i.test(b.uri)) continue;
      try {
        const r = resolveResourceUri(b.uri, baseDir);
        if (r.kind === 'file') out.add(realOrSelf(r.path));
      } catch {
        // The reader accepted the asset, so this does not happen; nothing to protect otherwise.
      }
    }
  }
  for (const img of asset.externalImages) out.add(realOrSelf(img.path));
  return out;
}

/**
 * Checks the files of one bake before they are written and returns those to write.
 * `output` is the main output path, `input` the input file; the bake is in place when they
 * are the same path. Every file must lie inside the main output's folder, lexically and
 * after resolving symbolic links ('bad-uri' otherwise); two files may not share a path
 * ('usage'). A file whose path is one the asset was read from (the input, its .bin, its
 * images) is passed on unchecked when it already holds the same bytes (an image copied onto
 * itself: writeFilesAtomic leaves equal bytes alone);
 * with other bytes it is refused ('usage') unless the bake is in place, so an input is
 * never modified otherwise. With the run's write plan for this job (`writes`), every file must
 * be one it planned, the buffer named by its content beside the main output (named only now),
 * or a copy of one of the input's own buffers at its URI beside the output; and no file may be
 * a symbolic link ('usage'): the late half of the write plan's guard.
 */
export async function guardOutputs(files: OutputFile[], output: string, input: string, asset: Asset, writes?: JobWrites): Promise<OutputFile[]> {
  const main = path.resolve(output);
  const root = path.dirname(main);
  const realRoot = realOrSelf(root);
  const inPlace = realOrSelf(main) === realOrSelf(path.resolve(input));
  const planned = writes ? new Set(writes.files.map((p) => path.resolve(p))) : null;
  // A .gltf written as the input's own bytes names its buffers by their input URIs: their copies
  // beside the output are the input's own files mirrored, allowed as well.
  if (planned && asset.container === 'gltf' && Array.isArray(asset.json?.buffers)) {
    for (const b of asset.json.buffers) {
      if (typeof b?.uri !== 'string' || /^data:/i.test(b.uri)) continue;
      try {
        planned.add(path.resolve(root, ...uriToRelativePath(b.uri).split('/')));
      } catch {
        // A URI the reader refused never gets here.
      }
    }
  }
  const protectedFiles = inputFiles(asset, input);
  const seen = new Set<string>();
  const kept: OutputFile[] = [];
  for (const file of files) {
    const abs = path.resolve(file.path);
    const shown = path.relative(root, abs) || path.basename(abs);
    if (!isInside(root, abs)) throw new TanframeError('bad-uri', `the output file '${shown}' would land outside the output folder`);
    const real = realOrSelf(abs);
    if (!isInside(realRoot, real)) {
      throw new TanframeError('bad-uri', `the output file '${shown}' would land outside the output folder through a symbolic link`);
    }
    if (seen.has(real)) throw new TanframeError('usage', `two output files would share the path '${shown}'`);
    seen.add(real);
    if (protectedFiles.has(real)) {
      // Copied onto itself unchanged: kept in the list (the writer leaves equal bytes alone, and
      // must know the new asset names this file), never written.
      if (await fileHolds(real, outputParts(file), outputLength(file))) {
        kept.push(file);
        continue;
      }
      if (!inPlace) throw new TanframeError('usage', `the output file '${shown}' would overwrite a file the input is read from; choose another output folder or name`);
    }
    if (planned && !planned.has(abs) && !(path.dirname(abs) === root && isBufferFileOf(main, path.basename(abs)))) {
      throw new TanframeError('usage', `the output file '${shown}' is not in the run's write plan`);
    }
    if ((await fsp.lstat(abs).catch(() => null))?.isSymbolicLink()) {
      throw new TanframeError('usage', `the output file '${shown}' is a symbolic link; tanframe writes through a link only when it is named itself`);
    }
    kept.push(file);
  }
  return kept;
}
