#!/usr/bin/env node
// Thin launcher: all logic lives in the library's CLI module.
import { main } from '../dist/cli/main.js';

main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
