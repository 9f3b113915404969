/**
 * Error tiers. `assert` guards caller contracts (a bug, not user input): it throws a
 * `TanframeError` with code 'invalid-argument'. `TanframeError` carries a stable `code` for
 * malformed files and usage errors too; the CLI maps it to an exit status and prints its
 * one-line message. Degenerate-but-valid geometry never throws.
 */

/** Stable error codes reported in the JSON report's `error.code`. */
export type ErrorCode =
  | 'usage'
  | 'bad-config'
  | 'unsupported-format'
  | 'read-failed'
  | 'empty-file'
  | 'bad-glb'
  | 'bad-json'
  | 'bad-gltf'
  | 'bad-accessor'
  | 'bad-index'
  | 'bad-draco'
  | 'bad-uri'
  | 'missing-resource'
  | 'unsupported-feature'
  | 'bad-obj'
  | 'bad-png'
  | 'too-large'
  | 'write-failed'
  | 'timeout'
  | 'internal'
  /** A library caller broke a function's contract (wrong types, lengths out of step). */
  | 'invalid-argument';

/** A failure with a stable code and a one-line, user-facing message. */
export class TanframeError extends Error {
  readonly code: ErrorCode;
  constructor(code: ErrorCode, message: string) {
    super(message);
    this.name = 'TanframeError';
    this.code = code;
  }
}

/** Caller-contract check: throws TanframeError 'invalid-argument' when `cond` is false. */
export function assert(cond: unknown, message: string): asserts cond {
  if (!cond) throw new TanframeError('invalid-argument', `assertion failed: ${message}`);
}

/**
 * The contract breach of a triangle list holding an index at or past the vertex count, as
 * `assert` words it: solvers check the range in their first pass over the indices and throw
 * this before they use the index.
 */
export function indexOutOfRange(): TanframeError {
  return new TanframeError('invalid-argument', 'assertion failed: an index is out of range');
}
