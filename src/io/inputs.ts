/**
 * Expands the command line's inputs (files, folders searched recursively, glob patterns)
 * into a sorted, de-duplicated list of mesh files, each with the relative path its output
 * mirrors. Folder walks never follow a symlink loop.
 */
import * as fs from 'node:fs/promises';
import * as path from 'node:path';

/** Extensions tanframe reads. */
export const MESH_EXTENSIONS = ['.glb', '.gltf', '.obj'];

/** One input file. */
export interface InputFile {
  /** Absolute path. */
  path: string;
  /** Path relative to the folder or glob base it was found under (its basename for a file). */
  relative: string;
  /**
   * The path as reports show it: a named file exactly as the user named it; a file found in a
   * named folder (or under a glob's base) as that folder as named plus the relative path.
   * Never depends on the working folder's depth (no `../..` chains for absolute inputs).
   */
  display: string;
}

/** Expansion result: files found and inputs that named nothing. */
export interface ExpandedInputs {
  files: InputFile[];
  problems: { input: string; message: string }[];
}

/** True when `p` has a mesh extension (case-insensitive). */
export function isMeshFile(p: string): boolean {
  return MESH_EXTENSIONS.includes(path.extname(p).toLowerCase());
}

function hasGlob(s: string): boolean {
  return /[*?[\]{}]/.test(s);
}

/** Converts a glob (`*`, `**`, `?`, `[...]`, `{a,b}`) over '/'-separated paths to a RegExp. */
export function globToRegExp(glob: string): RegExp {
  let re = '';
  for (let i = 0; i < glob.length; i++) {
    const c = glob[i];
    if (c === '*') {
      if (glob[i + 1] === '*') {
        const slash = glob[i + 2] === '/';
        re += slash ? '(?:.*/)?' : '.*';
        i += slash ? 2 : 1;
      } else re += '[^/]*';
    } else if (c === '?') re += '[^/]';
    else if (c === '[') {
      const end = glob.indexOf(']', i + 1);
      if (end < 0) re += '\\[';
      else {
        let body = glob.slice(i + 1, end).replace(/\\/g, '\\\\');
        if (body.startsWith('!')) body = '^' + body.slice(1);
        re += `[${body}]`;
        i = end;
      }
    } else if (c === '{') {
      const end = glob.indexOf('}', i + 1);
      if (end < 0) re += '\\{';
      else {
        re += '(?:' + glob.slice(i + 1, end).split(',').map((s) => s.replace(/[.+^$()|\\]/g, '\\$&')).join('|') + ')';
        i = end;
      }
    } else re += c.replace(/[.+^$()|\\]/g, '\\$&');
  }
  return new RegExp(`^${re}$`);
}

async function walk(dir: string, visited: Set<string>, out: string[]): Promise<void> {
  let real: string;
  try {
    real = await fs.realpath(dir);
  } catch {
    return;
  }
  if (visited.has(real)) return;
  visited.add(real);
  let entries;
  try {
    entries = await fs.readdir(dir, { withFileTypes: true });
  } catch {
    return;
  }
  entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  for (const e of entries) {
    const p = path.join(dir, e.name);
    let isDir = e.isDirectory();
    let isFile = e.isFile();
    if (e.isSymbolicLink()) {
      try {
        const st = await fs.stat(p);
        isDir = st.isDirectory();
        isFile = st.isFile();
      } catch {
        continue;
      }
    }
    if (isDir) await walk(p, visited, out);
    else if (isFile) out.push(p);
  }
}

/** The deepest folder holding every one of `dirs` (absolute paths). */
function commonFolder(dirs: string[]): string {
  let common = dirs[0];
  for (const d of dirs) {
    while (path.relative(common, d).split(path.sep)[0] === '..' || path.isAbsolute(path.relative(common, d))) {
      const up = path.dirname(common);
      if (up === common) break;
      common = up;
    }
  }
  return common;
}

function toPosix(p: string): string {
  return p.split(path.sep).join('/');
}

/**
 * The display path of `relative` (posix) found under `base` as the user named it: `base`
 * without trailing separators, '/', then `relative`; a base of '.' or '' adds nothing.
 */
export function displayPath(base: string, relative: string): string {
  if (/^[\\/]+$/.test(base)) return '/' + relative;
  const b = base.replace(/[\\/]+$/, '');
  return b === '' || b === '.' ? relative : `${b}/${relative}`;
}

/**
 * Expands inputs relative to `cwd`. Files are taken whatever their extension (the reader
 * refuses unknown ones); folders and globs yield only mesh files. Files named one by one keep
 * their layout relative to the deepest folder holding them all (one file: its name), as a
 * glob's matches do relative to its base, so same-named files from two folders never clash. The same file (by real
 * path) named twice is listed once. Returns files sorted by absolute path.
 */
export async function expandInputs(inputs: string[], cwd: string): Promise<ExpandedInputs> {
  const files: InputFile[] = [];
  const problems: { input: string; message: string }[] = [];
  const seen = new Set<string>();
  // Files named one by one: their layout is kept relative to their common folder (below).
  const named: InputFile[] = [];
  const add = async (abs: string, relative: string, display: string, isNamed = false) => {
    let key = abs;
    try {
      key = await fs.realpath(abs);
    } catch {
      /* keep the path itself */
    }
    if (seen.has(key)) return;
    seen.add(key);
    const file = { path: abs, relative: toPosix(relative), display };
    files.push(file);
    if (isNamed) named.push(file);
  };
  for (const input of inputs) {
    const abs = path.resolve(cwd, input);
    let st = null;
    try {
      st = await fs.stat(abs);
    } catch {
      st = null;
    }
    if (st?.isDirectory()) {
      const found: string[] = [];
      await walk(abs, new Set(), found);
      const meshes = found.filter(isMeshFile);
      if (meshes.length === 0) problems.push({ input, message: 'no .glb, .gltf or .obj files in this folder' });
      for (const f of meshes) await add(f, path.relative(abs, f), displayPath(input, toPosix(path.relative(abs, f))));
    } else if (st) {
      await add(abs, path.basename(abs), input, true);
    } else if (hasGlob(input)) {
      const parts = toPosix(input).split('/');
      let k = 0;
      while (k < parts.length - 1 && !hasGlob(parts[k])) k++;
      const baseRel = parts.slice(0, k).join('/');
      const base = path.resolve(cwd, baseRel === '' ? '.' : baseRel || '/');
      const pattern = globToRegExp(parts.slice(k).join('/'));
      const found: string[] = [];
      await walk(base, new Set(), found);
      const matches = found.filter((f) => isMeshFile(f) && pattern.test(toPosix(path.relative(base, f))));
      if (matches.length === 0) problems.push({ input, message: 'the pattern matches no .glb, .gltf or .obj file' });
      for (const f of matches) await add(f, path.relative(base, f), displayPath(baseRel === '' && toPosix(input).startsWith('/') ? '/' : baseRel, toPosix(path.relative(base, f))));
    } else {
      problems.push({ input, message: 'no such file or folder' });
    }
  }
  if (named.length > 1) {
    const common = commonFolder(named.map((f) => path.dirname(f.path)));
    for (const f of named) f.relative = toPosix(path.relative(common, f.path));
  }
  files.sort((a, b) => (a.path < b.path ? -1 : a.path > b.path ? 1 : 0));
  return { files, problems };
}
