/**
 * Limits of the normal-map conversion that the command line checks while it parses options,
 * before the converter itself is loaded (src/cli/commands.ts).
 */

/** Largest accepted `padding` (edge dilation into empty texels, in texels). A choice of ours. */
export const MAX_PADDING = 250;
