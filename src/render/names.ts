/**
 * The names the renderer's views and modes go by, on their own so the command line can check
 * `--views` and `--modes` before the renderer is loaded (src/cli/commands.ts).
 */

/** The camera views of a sheet. */
export const VIEW_NAMES = ['front', 'back', 'left', 'right', 'top', 'bottom', 'iso'] as const;
export type ViewName = (typeof VIEW_NAMES)[number];

/** The shading modes of a sheet. */
export const MODE_NAMES = ['shaded', 'mismatch', 'findings'] as const;
export type ModeName = (typeof MODE_NAMES)[number];
