/**
 * Expands the command line's inputs (files, folders searched recursively, glob patterns)
 * into a sorted, de-duplicated list of mesh files, each with the relative path its output
 * mirrors. Folder walks never follow a symlink loop, and leave out node_modules, folders
 * whose name starts with '.', the run's own output folder and what --exclude names.
 * Based on: bash glob rules as the `braces` (brace expansion) and picomatch (`?`, classes,
 * `**`, extglobs) packages implement them.
 */
// Synchronous calls on purpose: a walk makes one call per folder and file, and each costs
// microseconds, while a round trip through the thread pool costs more (a rerun of a large tree
// walks it all before it finds that nothing changed).
import * as fs from 'node:fs';
import * as path from 'node:path';
import braces from 'braces';
import picomatch from 'picomatch';
import { TanframeError } from '../mesh/errors.js';

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
  return picomatch.scan(toPosix(s)).isGlob || s.startsWith('!');
}

/** Most alternatives one glob's braces may expand to; past it the pattern is refused. Our choice. */
const MAX_BRACE_ALTERNATIVES = 1000;

/**
 * A matcher for one glob over '/'-separated relative paths. Braces are expanded first (the
 * `braces` package, bash rules), then each alternative is matched by picomatch (`?`, classes
 * with `[!...]` negation and POSIX names, `**`, extglobs); a leading `!` negates the whole
 * pattern. Expanding first keeps a globstar-and-slash alternative inside braces meaning what
 * bash means (it also matches at the top level). Like a shell, `*` and `**` do not match a name
 * starting with '.' unless the pattern spells the dot. Throws TanframeError 'usage' for a
 * pattern that cannot be compiled or expands to more than MAX_BRACE_ALTERNATIVES.
 */
export function globMatcher(glob: string): (relativePath: string) => boolean {
  let body = glob;
  let negated = false;
  while (body.startsWith('!') && body[1] !== '(') {
    negated = !negated;
    body = body.slice(1);
  }
  try {
    const alternatives = braces.expand(body);
    if (alternatives.length > MAX_BRACE_ALTERNATIVES) throw new Error(`its braces expand to more than ${MAX_BRACE_ALTERNATIVES} patterns`);
    const matchers = alternatives.map((a) => picomatch(a, { windows: false, posix: true }));
    return (p: string) => matchers.some((m) => m(p)) !== negated;
  } catch (err) {
    throw new TanframeError('usage', `the pattern '${glob}' is not a valid glob: ${(err as Error).message}`);
  }
}

/** What a folder walk leaves out besides the fixed rules (node_modules, names starting with '.'). */
export interface DiscoveryOptions {
  /**
   * --exclude globs. A glob without '/' is matched against the name of each file and folder
   * (so `wip` leaves out every folder named wip); one with '/' against the path of each file
   * and folder relative to `cwd`, and relative to the folder being walked (the folder input,
   * or the glob's base), so `wip/**` leaves out `assets/wip/` in a walk of `assets`.
   */
  exclude?: string[];
  /** Folders never walked into (the run's own output folder); compared by real path. */
  skipFolders?: string[];
}

/** Folder names a folder walk never enters: node_modules and anything starting with '.'. */
export function isSkippedFolderName(name: string): boolean {
  return name === 'node_modules' || name.startsWith('.');
}

/** The --exclude test of one path (absolute) found walking `base`, compiled once per run. */
function excluder(globs: string[], cwd: string): (abs: string, base: string) => boolean {
  if (globs.length === 0) return () => false;
  const byName = globs.filter((g) => !g.includes('/')).map(globMatcher);
  const byPath = globs.filter((g) => g.includes('/')).map((g) => globMatcher(g.replace(/^\.\//, '')));
  return (abs: string, base: string) => {
    if (byName.some((m) => m(path.basename(abs)))) return true;
    const fromCwd = toPosix(path.relative(cwd, abs));
    const fromBase = toPosix(path.relative(base, abs));
    return byPath.some((m) => m(fromCwd) || m(fromBase));
  };
}

interface WalkRules {
  /** True for a file or folder (absolute path) found walking `base` to leave out. */
  excluded: (abs: string, base: string) => boolean;
  /** Real paths of folders never entered. */
  skip: Set<string>;
}

/**
 * How many folder levels below its base a glob can reach: Infinity with `**`, else one more
 * than its slashes (counted inside braces too, so the bound is never too low).
 */
export function globDepth(glob: string): number {
  return glob.includes('**') ? Infinity : glob.split('/').length;
}

/** The real path of `p`, or `p` itself when it cannot be resolved. */
function realOr(p: string): string {
  try {
    return fs.realpathSync.native(p);
  } catch {
    return p;
  }
}

async function walk(dir: string, visited: Set<string>, out: string[], rules: WalkRules, base: string, depth = Infinity): Promise<void> {
  const root = dir === base;
  let real: string;
  try {
    real = fs.realpathSync.native(dir);
  } catch {
    return;
  }
  if (visited.has(real) || (!root && rules.skip.has(real))) return;
  visited.add(real);
  let entries;
  try {
    entries = fs.readdirSync(dir, { withFileTypes: true });
  } catch {
    return;
  }
  entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
  for (const e of entries) {
    const p = path.join(dir, e.name);
    if (rules.excluded(p, base)) continue;
    let isDir = e.isDirectory();
    let isFile = e.isFile();
    if (e.isSymbolicLink()) {
      try {
        const st = fs.statSync(p);
        isDir = st.isDirectory();
        isFile = st.isFile();
      } catch {
        continue;
      }
    }
    if (isDir && !isSkippedFolderName(e.name)) {
      // A file at this level is depth 1; a glob reaching `depth` levels enters folders above it only.
      if (depth > 1) await walk(p, visited, out, rules, base, depth - 1);
    } else if (isFile) out.push(p);
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
 * refuses unknown ones); folders and globs yield only mesh files. Folder walks (of a folder
 * input, or below a glob's literal base) never enter node_modules, a folder whose name starts
 * with '.', the folders of `discovery.skipFolders` or what `discovery.exclude` matches; a
 * file named explicitly is always taken. Files named one by one keep their layout relative
 * to the deepest folder holding them all (one file: its name), as a glob's matches do
 * relative to its base, so same-named files from two folders never clash. The same file (by
 * real path) named twice is listed once. Returns files sorted by absolute path. Throws
 * TanframeError 'usage' for an --exclude or input pattern that is not a valid glob.
 */
export async function expandInputs(inputs: string[], cwd: string, discovery: DiscoveryOptions = {}): Promise<ExpandedInputs> {
  const files: InputFile[] = [];
  const problems: { input: string; message: string }[] = [];
  const seen = new Set<string>();
  const skip = new Set<string>();
  for (const folder of discovery.skipFolders ?? []) {
    const abs = path.resolve(cwd, folder);
    skip.add(realOr(abs));
  }
  const rules: WalkRules = { excluded: excluder(discovery.exclude ?? [], cwd), skip };
  // Files named one by one: their layout is kept relative to their common folder (below).
  const named: InputFile[] = [];
  const add = async (abs: string, relative: string, display: string, isNamed = false) => {
    let key = abs;
    try {
      key = fs.realpathSync.native(abs);
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
      st = fs.statSync(abs);
    } catch {
      st = null;
    }
    if (st?.isDirectory()) {
      const found: string[] = [];
      await walk(abs, new Set(), found, rules, abs);
      const meshes = found.filter(isMeshFile);
      if (meshes.length === 0) problems.push({ input, message: 'no .glb, .gltf or .obj files in this folder' });
      for (const f of meshes) await add(f, path.relative(abs, f), displayPath(input, toPosix(path.relative(abs, f))));
    } else if (st) {
      await add(abs, path.basename(abs), input, true);
    } else if (hasGlob(input)) {
      const scan = picomatch.scan(toPosix(input));
      const base = path.resolve(cwd, scan.base === '' ? '.' : scan.base);
      const matches = globMatcher(scan.prefix + scan.glob);
      const found: string[] = [];
      await walk(base, new Set(), found, rules, base, globDepth(scan.glob));
      const hits = found.filter((f) => isMeshFile(f) && matches(toPosix(path.relative(base, f))));
      if (hits.length === 0) problems.push({ input, message: 'the pattern matches no .glb, .gltf or .obj file' });
      const shownBase = scan.base === '' && toPosix(input).startsWith('/') ? '/' : scan.base;
      for (const f of hits) await add(f, path.relative(base, f), displayPath(shownBase, toPosix(path.relative(base, f))));
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
