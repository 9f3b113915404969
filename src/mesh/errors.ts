/**
 * Error tiers. `assert` guards caller contracts (a bug, not user input). `TanframeError`
 * carries a stable `code` for malformed files and usage errors; the CLI maps it to an exit
 * status and prints its one-line message. Degenerate-but-valid geometry never throws.
 */

/** Stable error codes reported in the JSON report's `error.code`. */
export type ErrorCode =
  | 'usage'
  | 'unsupported-format'
  | 'read-failed'
  | 'empty-file'
  | 'bad-glb'
  | 'bad-json'
  | 'bad-gltf'
  | 'bad-accessor'
  | 'bad-index'
  | 'bad-uri'
  | 'missing-resource'
  | 'unsupported-feature'
  | 'bad-obj'
  | 'bad-png'
  | 'too-large'
  | 'write-failed'
  | 'timeout'
  | 'internal';

/** A failure with a stable code and a one-line, user-facing message. */
export class TanframeError extends Error {
  readonly code: ErrorCode;
  constructor(code: ErrorCode, message: string) {
    super(message);
    this.name = 'TanframeError';
    this.code = code;
  }
}

/** Caller-contract check: throws a plain Error (a programming error) when `cond` is false. */
export function assert(cond: unknown, message: string): asserts cond {
  if (!cond) throw new Error(`assertion failed: ${message}`);
}
