#!/usr/bin/env node
// The bundle is built by `npm run build` (run by `npm ci` through `prepare`).
import '../dist/polecheck.js';
