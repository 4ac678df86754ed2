// Peak-memory probe for bench/engine.mjs, loaded with `node --import` ahead of
// the program it measures: on exit it writes the process's maximum resident
// set size (process.resourceUsage().maxRSS, in KiB) to the file named by
// POLECHECK_BENCH_MAXRSS_FILE. Portable where GNU time is not installed.
import { writeFileSync } from 'node:fs';

const file = process.env.POLECHECK_BENCH_MAXRSS_FILE;
if (file) process.on('exit', () => writeFileSync(file, `${process.resourceUsage().maxRSS}\n`));
