// Loads the bundled command (dist/polecheck.cjs) with a V8 code cache: the
// bytecode of the functions a check runs, saved by the build after a sample
// check (scripts/build.mjs), so that a cold start neither parses the bundle
// nor compiles those functions again. Node 20 has no compile cache of its
// own (module.enableCompileCache came with Node 22), hence vm.Script with
// cachedData. Copied by the build to dist/load.js.
//
// The cache is used only when it is certainly this bundle's: its header holds
// the CRC-32 of the bundle's bytes and of its own payload (V8 checks its
// version and flags, and the source's length only, and release builds skip
// the payload checksum). A missing, stale, corrupt or rejected cache is
// ignored silently: the bundle is then compiled as any script is.

import { readFileSync, renameSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Script } from 'node:vm';
import * as zlib from 'node:zlib';

const BUNDLE = fileURLToPath(new URL('./polecheck.cjs', import.meta.url));
export const CODE_CACHE = fileURLToPath(new URL('./polecheck.code-cache', import.meta.url));
const MAGIC = Buffer.from('polecheck code cache 1\n');
const HEADER = MAGIC.length + 12;

// zlib.crc32 came with Node 20.15; without it there is no cache.
const crc32 = typeof zlib.crc32 === 'function' ? zlib.crc32 : undefined;

/** What became of the cache at the last load: 'used', 'rejected' (by V8), 'invalid' (stale or corrupt) or 'none'. For tests and measurements. */
export let codeCache = 'none';

/** The cache's payload if its header matches the bundle's bytes and the payload's checksum. */
function validCache(bundle) {
  if (!crc32) return undefined;
  let file;
  try {
    file = readFileSync(CODE_CACHE);
  } catch {
    return undefined;
  }
  codeCache = 'invalid';
  if (file.length <= HEADER || !file.subarray(0, MAGIC.length).equals(MAGIC)) return undefined;
  const payload = file.subarray(HEADER);
  const ok = file.readUInt32LE(MAGIC.length) === bundle.length && file.readUInt32LE(MAGIC.length + 4) === crc32(bundle) && file.readUInt32LE(MAGIC.length + 8) === crc32(payload);
  return ok ? payload : undefined;
}

function writeCache(bundle, payload, path) {
  const header = Buffer.alloc(12);
  header.writeUInt32LE(bundle.length, 0);
  header.writeUInt32LE(crc32(bundle), 4);
  header.writeUInt32LE(crc32(payload), 8);
  const tmp = `${path}.${process.pid}.tmp`;
  writeFileSync(tmp, Buffer.concat([MAGIC, header, payload]));
  renameSync(tmp, path);
}

/** Runs the bundle (as Node runs a CommonJS module) and returns its exports. */
export function loadBundle() {
  const bundle = readFileSync(BUNDLE);
  const wrapped = `(function (exports, require, module, __filename, __dirname) {${bundle.toString('utf8')}\n})`;
  codeCache = 'none';
  const cachedData = validCache(bundle);
  const script = new Script(wrapped, { filename: BUNDLE, cachedData });
  if (cachedData) codeCache = script.cachedDataRejected ? 'rejected' : 'used';
  const module = { exports: {} };
  script.runInThisContext().call(module.exports, module.exports, createRequire(BUNDLE), module, BUNDLE, dirname(BUNDLE));
  // The build runs a sample check with this variable set, and keeps what V8 compiled for it.
  const out = process.env.POLECHECK_WRITE_CODE_CACHE;
  if (out && crc32) process.once('exit', () => writeCache(bundle, script.createCachedData(), out));
  return module.exports;
}
