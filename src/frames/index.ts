/**
 * The `tanframe/frames` entry: the frame solve alone, with its types. It imports nothing from
 * Node.js (no file system, no process), so it bundles for and runs in a browser, and its
 * declarations need no Node.js types.
 */
export { computeFrames } from './computeFrames.js';
export type { FrameInput, FrameOptions, FrameResult, FrameStats, FrameMethod, TangentWeight, UvOrigin } from '../mesh/types.js';
export { TanframeError, type ErrorCode } from '../mesh/errors.js';
