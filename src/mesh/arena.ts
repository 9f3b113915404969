/**
 * Based on: the usual scratch-arena pattern of mesh processing (common practice): scratch
 * memory is kept and handed out again instead of freshly allocated for every primitive of
 * every file, so a batch touches new pages only while its largest primitive grows.
 *
 * A slot is one growable block of memory; a stage asks for a typed view of a slot at the
 * length it needs and gets the slot's memory, grown geometrically (doubled, at least 64 KiB)
 * when it is too small. Contents are whatever the slot held before unless a fill value is
 * given. Stages that run one after another share slots; arrays alive at the same time take
 * distinct slots (the SLOT_* numbers below say who uses which). Nothing a function returns to
 * its caller may live in an arena: results are fresh arrays; only scratch is handed out here.
 */

/**
 * Slots of the frame solve, in the order it runs. An array dead by the time a later one is made
 * shares its slot, so little dead scratch stays resident: welding's hashes and order become the
 * corner contributions and the welded corners, the weld table the adjacency row starts, the
 * edge rows the frame store, their targets the first-good corners, the row fill the split's
 * frame ids and the row starts its source vertices.
 */
export const SLOT_WELD_TABLE = 0;
export const SLOT_WELD_REP = 1;
export const SLOT_WELD_HASH = 20;
export const SLOT_WELD_ORDER = 21;
export const SLOT_WELD_BUCKETS = 22;
export const SLOT_WELD_CURSOR = 23;
export const SLOT_CORNER_VERTEX = 21;
export const SLOT_CONTRIB = 20;
export const SLOT_TRIANGLE_FLAGS = 3;
export const SLOT_ADJ_START = 0;
export const SLOT_ADJ_FILL = 5;
export const SLOT_ADJ_EDGES = 2;
export const SLOT_ADJ_TARGETS = 24;
export const SLOT_NEIGHBOUR = 6;
export const SLOT_CORNER_FRAME = 7;
export const SLOT_FRAMES = 2;
export const SLOT_FIRST_GOOD = 24;
export const SLOT_SPLIT_FRAME_OF = 5;
export const SLOT_SPLIT_SOURCE = 0;
export const SLOT_SPLIT_HASHED = 11;
/** lengyel's sums and per-vertex flags (the lengyel solve runs instead of the corner kernel). */
export const SLOT_LENGYEL_SUMS = 4;
export const SLOT_LENGYEL_UNDEFINED = 5;
/**
 * Slots of the UV-overlap check. It runs after the solve, so it reuses the solve's slots, the
 * largest arrays on the largest slots (the boxes on the welded corners, the cell entries on the
 * edge rows).
 */
export const SLOT_OVERLAP_BOX = 21;
export const SLOT_OVERLAP_ENTRIES = 2;
export const SLOT_OVERLAP_ORDER = 6;
export const SLOT_OVERLAP_CLASS = 7;
export const SLOT_OVERLAP_HASH = 24;
export const SLOT_SHELL_OF = 1;
export const SLOT_SHELL_AREA = 0;
export const SLOT_OVERLAP_USABLE = 3;
export const SLOT_OVERLAP_CELLS = 5;
/** Per vertex a hash of its UV point (the exact-copy search). */
export const SLOT_OVERLAP_POINT_HASH = 11;
export const SLOT_OVERLAP_TABLE = 22;
export const SLOT_SHELL_PARENT = 23;
export const SLOT_SHELL_HASH_A = 13;
export const SLOT_SHELL_HASH_B = 14;
export const SLOT_SHELL_POINTS = 15;
export const SLOT_SHELL_SEEN = 16;
export const SLOT_SHELL_USABLE = 12;
export const SLOT_OVERLAP_LIVE = 17;
export const SLOT_OVERLAP_FLAGS = 18;
export const SLOT_STACKED = 19;
/** diagnosePrimitive: per triangle whether it has no UV area (filled by the UV-overlap check), when no picture marks are wanted. */
export const SLOT_DEGENERATE_UV = 25;

/** Smallest block a slot grows to, in bytes. */
const MIN_BLOCK = 1 << 16;

/** Scratch memory kept across calls: one growable block per slot. */
export class Arena {
  private readonly blocks: ArrayBuffer[] = [];
  /** Most bytes the arena keeps between primitives and files (enough for the scratch of a few hundred thousand triangles); bakeAsset and processFile trim to it. */
  static readonly KEEP_BYTES = 32 * 2 ** 20;
  /** Bytes of blocks allocated so far (grows only; for benchmarks). */
  allocatedBytes = 0;

  /** The slot's block, at least `byteLength` bytes (contents kept only when it did not grow). */
  private block(slot: number, byteLength: number): ArrayBuffer {
    const b = this.blocks[slot];
    if (b && b.byteLength >= byteLength) return b;
    let size = Math.max(MIN_BLOCK, b ? b.byteLength * 2 : 0);
    while (size < byteLength) size *= 2;
    const grown = new ArrayBuffer(size);
    this.allocatedBytes += size;
    this.blocks[slot] = grown;
    return grown;
  }

  /** A Uint8Array of `length` over the slot, filled with `fill` when given. */
  u8(slot: number, length: number, fill?: number): Uint8Array<ArrayBuffer> {
    const a = new Uint8Array(this.block(slot, length), 0, length);
    if (fill !== undefined) a.fill(fill);
    return a;
  }

  /** A Uint32Array of `length` over the slot, filled with `fill` when given. */
  u32(slot: number, length: number, fill?: number): Uint32Array<ArrayBuffer> {
    const a = new Uint32Array(this.block(slot, length * 4), 0, length);
    if (fill !== undefined) a.fill(fill);
    return a;
  }

  /** A Float32Array of `length` over the slot, filled with `fill` when given. */
  f32(slot: number, length: number, fill?: number): Float32Array<ArrayBuffer> {
    const a = new Float32Array(this.block(slot, length * 4), 0, length);
    if (fill !== undefined) a.fill(fill);
    return a;
  }

  /** A Float64Array of `length` over the slot, filled with `fill` when given. */
  f64(slot: number, length: number, fill?: number): Float64Array<ArrayBuffer> {
    const a = new Float64Array(this.block(slot, length * 8), 0, length);
    if (fill !== undefined) a.fill(fill);
    return a;
  }

  /**
   * `a` (a view of `slot`) at a larger `length`, its contents kept and the new tail filled
   * with `fill`; the slot grows when it must.
   */
  growU32(slot: number, a: Uint32Array<ArrayBuffer>, length: number, fill: number): Uint32Array<ArrayBuffer> {
    const old = this.blocks[slot];
    if (old && old.byteLength >= length * 4 && a.buffer === old) {
      const b = new Uint32Array(old, 0, length);
      b.fill(fill, a.length);
      return b;
    }
    const kept = a.slice();
    const b = this.u32(slot, length);
    b.set(kept);
    b.fill(fill, kept.length);
    return b;
  }

  /** Same as growU32 for a Float32Array. */
  growF32(slot: number, a: Float32Array<ArrayBuffer>, length: number, fill: number): Float32Array<ArrayBuffer> {
    const old = this.blocks[slot];
    if (old && old.byteLength >= length * 4 && a.buffer === old) {
      const b = new Float32Array(old, 0, length);
      b.fill(fill, a.length);
      return b;
    }
    const kept = a.slice();
    const b = this.f32(slot, length);
    b.set(kept);
    b.fill(fill, kept.length);
    return b;
  }

  /**
   * Lets go of the largest blocks until the arena holds at most `maxBytes` (the garbage
   * collector frees them), so one huge primitive does not keep its scratch resident through
   * the rest of its file and the files after it, while the scratch of ordinary ones stays.
   */
  trim(maxBytes: number): void {
    let held = this.heldBytes();
    while (held > maxBytes) {
      let largest = -1;
      for (let i = 0; i < this.blocks.length; i++) {
        if (this.blocks[i] && (largest < 0 || this.blocks[i].byteLength > this.blocks[largest].byteLength)) largest = i;
      }
      held -= this.blocks[largest].byteLength;
      delete this.blocks[largest];
    }
  }

  /** Bytes the arena holds now. */
  heldBytes(): number {
    let n = 0;
    for (const b of this.blocks) if (b) n += b.byteLength;
    return n;
  }
}

let shared: Arena | null = null;

/**
 * This thread's arena, made on first use (module state belongs to one thread: each worker
 * has its own).
 */
export function threadArena(): Arena {
  shared ??= new Arena();
  return shared;
}
