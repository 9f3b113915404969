/**
 * The write plan of one run: every file the run will write, listed before any work starts and
 * checked against every file the run reads.
 * Based on: DESIGN.md, Guarantees (every write planned; never over an input or a file an input
 * references; never two contents on one path; never through a symbolic link the user did not
 * name); POSIX realpath(3) and lstat(2) for comparing paths. Common practice.
 *
 * A run builds one WritePlan: first the files it reads (`read`: the inputs and what they
 * reference, listed by listAssetReferences), then every write it knows of (`write`): mesh
 * outputs and the images copied beside them, --report, --junit, --html, the --uv-maps folder.
 * More kinds of output register the same way, with one `write` call before any work starts:
 * that is the place for --views and the state file (`.tanframe-state.json`). A conflict throws
 * TanframeError 'usage' with one line naming both paths, so the run stops with exit status 2
 * before anything is written. Files whose names are known only later (a buffer named by its
 * content, a UV picture) go through `check` (or guardOutputs, for a bake's own files) right
 * before they are written.
 *
 * Paths compare by real path: symbolic links and `..` resolved through the deepest existing
 * folder, and case folded where the file system ignores case (probed, per folder).
 */
import { createHash } from 'node:crypto';
import * as fs from 'node:fs';
import * as path from 'node:path';
import { TanframeError } from '../mesh/errors.js';
import { listAssetReferences, type AssetReferences } from '../io/assetRefs.js';
import { readRegularFile } from '../io/files.js';
import { BUFFER_HASH_DIGITS, sniffImageType } from '../io/gltfWrite.js';
import { isInside, realPathOfNearestExisting, uriToRelativePath } from '../io/uri.js';

/** Inputs whose references are listed at once while planning. Our choice. */
const LISTS_AT_ONCE = 4;

/** Extensions a report, JUnit or HTML file never has: naming one is a mistake (often a shell-expanded `*.glb`). */
const NOT_A_REPORT = ['.glb', '.gltf', '.obj', '.mtl', '.bin'];

/** How `write` treats one destination. */
export interface WriteOptions {
  /** The user named this path: when it is a symbolic link, its target is written and the link kept. */
  named?: boolean;
  /** Key (see WritePlan.key) of the one read file this write may replace (the input of an in-place bake). */
  replaces?: string;
  /** The folder the user named (-o): no folder between it and the file may be a symbolic link. */
  root?: string;
}

/** One run's writes and reads, compared by real path. */
export class WritePlan {
  private readonly reads = new Map<string, { shown: string; owners: Set<string> }>();
  private readonly writes = new Map<string, string>();
  private readonly foldsCase = new Map<string, boolean>();
  /** Keys computed while planning (resolved path -> key); null once settled. */
  private keys: Map<string, string> | null = new Map();

  constructor(private readonly cwd: string) {}

  /** `abs` as messages show it: relative to the working folder when inside it. */
  shown(abs: string): string {
    const rel = path.relative(this.cwd, abs);
    return rel === '' ? '.' : rel.startsWith('..') || path.isAbsolute(rel) ? abs : rel;
  }

  /** The path's identity: its real path (through the deepest existing folder), case folded where the file system ignores case. */
  key(abs: string): string {
    const resolved = path.resolve(abs);
    const known = this.keys?.get(resolved);
    if (known !== undefined) return known;
    let real: string;
    try {
      real = realPathOfNearestExisting(resolved);
    } catch {
      real = resolved;
    }
    const k = this.ignoresCase(real) ? real.toLowerCase() : real;
    this.keys?.set(resolved, k);
    return k;
  }

  /**
   * Ends the planning: keys are remembered while the plan is made (nothing is written then),
   * and computed afresh for the late checks right before a write.
   */
  settle(): void {
    this.keys = null;
  }

  /** Records a file the run reads; `owner` is the input it belongs to (itself for an input). */
  read(abs: string, owner: string): void {
    const k = this.key(abs);
    const r = this.reads.get(k);
    if (r) r.owners.add(owner);
    else this.reads.set(k, { shown: this.shown(abs), owners: new Set([owner]) });
  }

  /** The inputs reading the file with key `k` (empty when none does). */
  readers(k: string): Set<string> {
    return this.reads.get(k)?.owners ?? new Set();
  }

  /**
   * Records a planned write and returns the path to write (a named symbolic link's target).
   * `role` names it in messages, path included ("--report r.json", "the output out/a.glb of
   * a.obj"). Throws TanframeError 'usage' when the destination is a symbolic link the user did
   * not name, a file the run reads (other than `options.replaces`), or already planned.
   */
  write(abs: string, role: string, options: WriteOptions = {}): string {
    if (options.root) this.noLinkedFolders(options.root, abs, role);
    const target = this.destination(abs, role, !!options.named);
    const k = this.key(target);
    const read = this.reads.get(k);
    if (read && k !== options.replaces) {
      throw new TanframeError('usage', `${role} would overwrite ${read.shown}, which the run reads; choose another path`);
    }
    const other = this.writes.get(k);
    if (other !== undefined) throw new TanframeError('usage', `${role} and ${other} are the same file; give them different paths`);
    this.writes.set(k, role);
    return target;
  }

  /** True when a write to the path with key `k` is planned. */
  plans(k: string): boolean {
    return this.writes.has(k);
  }

  /**
   * The guard for a file named only now (a UV picture): the same checks as `write`, recorded,
   * thrown as TanframeError 'write-failed' (the run is under way: the file fails, not the plan).
   */
  check(abs: string, role: string): string {
    try {
      return this.write(abs, role);
    } catch (err) {
      throw new TanframeError('write-failed', (err as Error).message);
    }
  }

  /**
   * Records a folder the run writes into (--uv-maps): it may not be a file the run reads, and no
   * file in it that the run may write (`mayWrite(name)`) may be a symbolic link.
   */
  folder(abs: string, role: string, mayWrite: (name: string) => boolean): void {
    const k = this.key(abs);
    const read = this.reads.get(k);
    if (read) throw new TanframeError('usage', `${role} would overwrite ${read.shown}, which the run reads; choose another folder`);
    let names: fs.Dirent[] = [];
    try {
      names = fs.readdirSync(abs, { withFileTypes: true });
    } catch {
      return;
    }
    for (const e of names) {
      if (e.isSymbolicLink() && mayWrite(e.name)) this.destination(path.join(abs, e.name), `${role}: ${this.shown(path.join(abs, e.name))}`, false);
    }
  }

  /** Refuses a symbolic link among the folders strictly between `root` and `abs` (nobody named them). */
  private noLinkedFolders(root: string, abs: string, role: string): void {
    const rel = path.relative(path.resolve(root), path.dirname(path.resolve(abs)));
    if (rel === '' || rel.startsWith('..') || path.isAbsolute(rel)) return;
    let p = path.resolve(root);
    for (const part of rel.split(path.sep)) {
      p = path.join(p, part);
      let st: fs.Stats;
      try {
        st = fs.lstatSync(p);
      } catch {
        return;
      }
      if (st.isSymbolicLink()) {
        let to = '';
        try {
          to = this.shown(fs.realpathSync(p));
        } catch {
          to = fs.readlinkSync(p);
        }
        throw new TanframeError('usage', `${role} would be written through ${this.shown(p)}, a symbolic link to ${to}; tanframe writes through a link only when it is named itself`);
      }
    }
  }

  /** The file to write for `abs`: itself, or a named link's target; refuses unnamed links. */
  private destination(abs: string, role: string, named: boolean): string {
    let st: fs.Stats | null = null;
    try {
      st = fs.lstatSync(abs);
    } catch {
      return abs;
    }
    if (!st.isSymbolicLink()) return abs;
    let target: string;
    try {
      target = fs.realpathSync(abs);
    } catch {
      throw new TanframeError('usage', `${role} is a symbolic link to ${fs.readlinkSync(abs)}, which does not exist; remove the link or name another path`);
    }
    if (!named) {
      throw new TanframeError('usage', `${role} is a symbolic link to ${this.shown(target)}; tanframe writes through a link only when it is named itself`);
    }
    return target;
  }

  /** Whether the file system holding `real` ignores case: probed once per folder by looking up the name in the other case. */
  private ignoresCase(real: string): boolean {
    let p = real;
    for (;;) {
      const parent = path.dirname(p);
      if (parent === p) return false;
      const known = this.foldsCase.get(parent);
      if (known !== undefined) return known;
      const name = path.basename(p);
      const swapped = [...name].map((c) => (c === c.toLowerCase() ? c.toUpperCase() : c.toLowerCase())).join('');
      let st: fs.Stats | null = null;
      try {
        st = fs.statSync(p);
      } catch {
        st = null;
      }
      if (st && swapped !== name) {
        let other: fs.Stats | null = null;
        try {
          other = fs.statSync(path.join(parent, swapped));
        } catch {
          other = null;
        }
        const folds = other !== null && other.ino === st.ino && other.dev === st.dev;
        this.foldsCase.set(parent, folds);
        return folds;
      }
      p = parent;
    }
  }
}

/** One mesh a bake writes. */
export interface PlannedMesh {
  /** Absolute input path. */
  input: string;
  /** Absolute output path as derived from -o (or the input itself, in place). */
  output: string;
  inPlace: boolean;
  format: 'glb' | 'gltf';
  /** The user named the output path itself (one input, `-o file`, or in place). */
  named: boolean;
  /** The folder the user named for it: -o, the output file's folder, or the input's folder in place. */
  root: string;
}

/** The writes of one bake job, as the plan settled them (structured-clone safe: it goes to a worker). */
export interface JobWrites {
  /** Where the main output really goes (a named link's target). */
  output: string;
  /** Files the job may write under exactly these paths (the main output, copied images). */
  files: string[];
  /** Copied images given a name of their own (different contents on one name): URI -> new URI. */
  imageUris: Record<string, string>;
  /** Keep the buffers embedded as data: URIs (a .gltf input whose buffers all are). */
  embedBuffers: boolean;
  /** Buffer files of the replaced asset to remove once the new JSON is in place (only it read them). */
  removeAfter: string[];
  /** Buffer files in the output folder another .gltf reads: never removed. */
  keep: string[];
  /** Notes for the file's report (a shared buffer left as it was). */
  notes: string[];
}

/** What a command asks the plan for. */
export interface RunRequest {
  cwd: string;
  /** Every input file of the run (absolute). */
  inputs: string[];
  /** The meshes to write (bake). */
  meshes: PlannedMesh[];
  /** Single files the user named: --report, --junit, --html (later --views sheets, the state file). */
  files: { option: string; path: string }[];
  /** Folders the user named: --uv-maps (later --views), with the names the run may write in them. */
  folders: { option: string; path: string; mayWrite: (name: string) => boolean }[];
  /** SHA-256 (hex) of a file, null when it cannot be read; default: hash its bytes (a rerun passes its stamp cache). */
  hash?: (file: string) => Promise<string | null>;
}

/** The settled plan: the plan itself (for late checks), each mesh's writes (or why it is refused), where each named file goes. */
export interface RunPlan {
  plan: WritePlan;
  jobs: (JobWrites | { refused: string })[];
  /** option -> path to write (a named link's target). */
  files: Map<string, string>;
}

/** Hex digits of a content hash in file names: 64 bits, deterministic, short (the same as buffer names). Our choice. */
export const NAME_HASH_DIGITS = BUFFER_HASH_DIGITS;

/** `uri` with `.<tag>` before its extension, in its last segment. */
function taggedUri(uri: string, tag: string): string {
  const slash = uri.lastIndexOf('/');
  const name = uri.slice(slash + 1);
  const dot = name.lastIndexOf('.');
  const renamed = dot > 0 ? `${name.slice(0, dot)}.${tag}${name.slice(dot)}` : `${name}.${tag}`;
  return uri.slice(0, slash + 1) + renamed;
}

/** The first bytes of a file (for the image type), or null when it cannot be read. */
function head(file: string): Uint8Array | null {
  try {
    const fd = fs.openSync(file, 'r');
    try {
      const b = Buffer.alloc(16);
      const n = fs.readSync(fd, b, 0, 16, 0);
      return b.subarray(0, n);
    } finally {
      fs.closeSync(fd);
    }
  } catch {
    return null;
  }
}

async function hashBytes(file: string): Promise<string | null> {
  try {
    return createHash('sha256').update(await readRegularFile(file)).digest('hex');
  } catch {
    return null;
  }
}

/** What one asset in an output folder reads: the keys of its buffer and image files. */
interface FolderAsset {
  buffers: string[];
  images: string[];
}

/** The buffers and images each .gltf and .glb in `dir` reads (keyed by the asset's key); one look per folder. */
async function assetsIn(dir: string, plan: WritePlan, cache: Map<string, Map<string, FolderAsset>>): Promise<Map<string, FolderAsset>> {
  const known = cache.get(dir);
  if (known) return known;
  const out = new Map<string, FolderAsset>();
  cache.set(dir, out);
  let names: string[] = [];
  try {
    names = fs.readdirSync(dir).filter((n) => /\.(gltf|glb)$/i.test(n));
  } catch {
    return out;
  }
  for (const n of names.sort()) {
    const refs = await listAssetReferences(path.join(dir, n));
    if (!refs) continue;
    out.set(plan.key(path.join(dir, n)), {
      buffers: refs.files.filter((f) => f.kind === 'buffer').map((f) => f.path),
      images: refs.files.filter((f) => f.kind === 'image').map((f) => plan.key(f.path)),
    });
  }
  return out;
}

/**
 * Builds the plan of a run: reads every input's references, then plans the named files, the
 * folders and each mesh with the images copied beside it. Images that would land on one name
 * in one folder share the file when their bytes are equal and get `<name>.<hash>.<ext>` each
 * when they differ. Throws TanframeError 'usage' (exit 2, nothing written) on a conflict; a
 * mesh that cannot be written in place as asked is refused on its own (`{ refused }`).
 */
export async function planRun(req: RunRequest): Promise<RunPlan> {
  const plan = new WritePlan(req.cwd);
  const hash = req.hash ?? hashBytes;
  const hashOf = async (file: string) => (await hash(file))?.slice(0, NAME_HASH_DIGITS) ?? null;
  const refs = new Map<string, AssetReferences | null>();
  for (const input of req.inputs) plan.read(input, input);
  // Listed a few at a time (one file's read overlaps another's parse), recorded in input order.
  const listed: (AssetReferences | null)[] = new Array(req.inputs.length).fill(null);
  let next = 0;
  const lister = async () => {
    while (next < req.inputs.length) {
      const i = next++;
      listed[i] = await listAssetReferences(req.inputs[i]);
    }
  };
  await Promise.all(Array.from({ length: Math.min(LISTS_AT_ONCE, req.inputs.length) }, lister));
  req.inputs.forEach((input, i) => {
    refs.set(input, listed[i]);
    for (const f of listed[i]?.files ?? []) plan.read(f.path, input);
  });

  const jobs: (JobWrites | { refused: string })[] = [];
  const images: { job: number; uri: string; source: string; target: string; outDir: string; root: string }[] = [];
  const folderCache = new Map<string, Map<string, FolderAsset>>();
  for (let i = 0; i < req.meshes.length; i++) {
    const m = req.meshes[i];
    const r = refs.get(m.input) ?? null;
    const inputKey = plan.key(m.input);
    const role = m.inPlace ? `the in-place output ${plan.shown(m.input)}` : `the output ${plan.shown(m.output)} of ${plan.shown(m.input)}`;
    let output: string;
    try {
      output = plan.write(m.output, role, { named: m.named, replaces: m.inPlace ? inputKey : undefined, root: m.root });
    } catch (err) {
      if (!m.inPlace && plan.key(m.output) === inputKey) {
        throw new TanframeError('usage', `${plan.shown(m.input)}: its output would overwrite the input itself; use --in-place to replace it`);
      }
      throw err;
    }
    const outDir = path.dirname(output);
    if (m.inPlace && m.format === 'gltf' && path.dirname(path.resolve(m.input)) !== outDir) {
      jobs.push({ refused: `--in-place: the .gltf is a symbolic link into another folder (${plan.shown(outDir)}); its buffers would be found from one of the two only: bake it at its real path, or with -o` });
      continue;
    }
    const job: JobWrites = { output, files: [output], imageUris: {}, embedBuffers: !!r?.embeddedBuffers && m.format === 'gltf', removeAfter: [], keep: [], notes: [] };
    jobs.push(job);
    for (const f of r?.files ?? []) {
      if (f.kind !== 'image') continue;
      if (m.format === 'glb') {
        const h = head(f.path);
        if (h === null || sniffImageType(h) !== null) continue; // embedded in the GLB, or missing (its URI is kept)
      }
      let rel: string;
      try {
        rel = uriToRelativePath(f.uri);
      } catch {
        continue;
      }
      images.push({ job: i, uri: f.uri, source: f.path, target: path.join(outDir, ...rel.split('/')), outDir, root: m.root });
    }
    if (m.format === 'gltf') {
      // Buffers of the asset being replaced, and buffers other .gltf files beside it read.
      const others = await assetsIn(outDir, plan, folderCache);
      const outKey = plan.key(output);
      const keep = new Set<string>();
      for (const [g, a] of others) if (g !== outKey) for (const b of a.buffers) keep.add(b);
      job.keep = [...keep];
      for (const b of others.get(outKey)?.buffers ?? []) {
        const readers = plan.readers(plan.key(b));
        const readByOthers = [...readers].some((x) => plan.key(x) !== outKey);
        if (keep.has(b)) job.notes.push(`kept ${path.basename(b)} as it was: another .gltf beside it reads it too (the baked asset has its own buffer file)`);
        else if (!readByOthers && isInside(outDir, b)) job.removeAfter.push(b);
      }
    }
  }

  // Named files after the meshes, so a report named like a mesh output says which one.
  const files = new Map<string, string>();
  for (const f of req.files) {
    const role = `${f.option} ${plan.shown(f.path)}`;
    const target = plan.write(f.path, role, { named: true });
    if (NOT_A_REPORT.includes(path.extname(f.path).toLowerCase())) {
      throw new TanframeError('usage', `${role} names a mesh file, not a report (did the shell expand a pattern? quote it)`);
    }
    files.set(f.option, target);
  }
  for (const d of req.folders) plan.folder(d.path, `${d.option} ${plan.shown(d.path)}`, d.mayWrite);

  // Images: one file per distinct content on each name. A copy never changes a file in place
  // that an existing asset names: different bytes on an existing name get a name of their own
  // (so the old JSON reads its old image until the new JSON is renamed into place).
  const byTarget = new Map<string, typeof images>();
  for (const img of images) {
    if (plan.key(img.target) === plan.key(img.source)) continue; // copied onto itself: nothing to write
    const k = plan.key(img.target);
    const list = byTarget.get(k);
    if (list) list.push(img);
    else byTarget.set(k, [img]);
  }
  const finalTargets = new Map<number, Set<string>>();
  const target = (x: (typeof images)[number], file: string) => {
    const set = finalTargets.get(x.job) ?? new Set<string>();
    set.add(plan.key(file));
    finalTargets.set(x.job, set);
    (jobs[x.job] as JobWrites).files.push(file);
  };
  const taggedTarget = (x: (typeof images)[number], tag: string) => path.join(x.outDir, ...uriToRelativePath(taggedUri(x.uri, tag)).split('/'));
  const rename = (x: (typeof images)[number], tag: string) => {
    (jobs[x.job] as JobWrites).imageUris[x.uri] = taggedUri(x.uri, tag);
    const file = taggedTarget(x, tag);
    if (!plan.plans(plan.key(file))) plan.write(file, `the image ${plan.shown(file)} copied for ${plan.shown(req.meshes[x.job].input)}`, { root: x.root });
    target(x, file);
  };
  for (const [k, list] of byTarget) {
    const hashes = new Map<string, string | null>();
    for (const x of list) if (!hashes.has(x.source)) hashes.set(x.source, await hashOf(x.source));
    if (new Set(hashes.values()).size > 1) {
      for (const x of list) {
        const tag = hashes.get(x.source);
        if (tag) rename(x, tag);
      }
      continue;
    }
    const first = list[0];
    const tag = hashes.get(first.source) ?? null;
    const existing = await hashOf(first.target);
    const readers = plan.readers(k);
    // The name holds other bytes (an earlier bake's image), or an earlier bake already gave
    // these bytes a name of their own: the new asset names that copy.
    if (tag !== null && existing !== tag && readers.size === 0 && (existing !== null || (await hashOf(taggedTarget(first, tag))) === tag)) {
      for (const x of list) rename(x, tag);
      continue;
    }
    if (readers.size > 0 && existing !== tag) {
      // Another input reads this file and the copy would change it.
      plan.write(first.target, `the image ${plan.shown(first.target)} copied for ${plan.shown(req.meshes[first.job].input)}`, { root: first.root });
    }
    if (readers.size === 0) plan.write(first.target, `the image ${plan.shown(first.target)} copied for ${plan.shown(req.meshes[first.job].input)}`, { root: first.root });
    for (const x of list) target(x, x.target);
  }
  // Images the replaced output named and the new one does not: removed once the new JSON is in
  // place, unless an input reads them or another asset in the folder names them.
  for (let i = 0; i < req.meshes.length; i++) {
    const job = jobs[i];
    // A GLB output names images by URI only when its input does (then it has images here).
    if ('refused' in job || req.meshes[i].inPlace || (req.meshes[i].format === 'glb' && !finalTargets.has(i))) continue;
    const outDir = path.dirname(job.output);
    const assets = await assetsIn(outDir, plan, folderCache);
    const outKey = plan.key(job.output);
    const mine = finalTargets.get(i) ?? new Set<string>();
    for (const img of assets.get(outKey)?.images ?? []) {
      if (mine.has(img) || plan.readers(img).size > 0 || plan.plans(img) || !isInside(outDir, img)) continue;
      if ([...assets].some(([a, refs]) => a !== outKey && refs.images.includes(img))) continue;
      job.removeAfter.push(img);
    }
  }
  plan.settle();
  return { plan, jobs, files };
}
