/**
 * The `tanframe/cli` entry: the command line as a function. `main(argv)` runs one command
 * line (without the node and script entries) and resolves to its exit status; it never
 * calls process.exit. `bin/tanframe.js` is a launcher over it.
 */
export { main } from './main.js';
export type { CliIo } from './options.js';
export type { ProgressClock } from './progress.js';
