// Process entries of the bundled command: the command itself, and a check
// worker thread. The bundle (dist/polecheck.cjs) exports both; the small
// loaders dist/polecheck.js and dist/worker.js call one (scripts/build.mjs).
import { run } from './cli/run';

export { serveChecks } from './cli/worker';

/** Runs the command with the process's arguments and streams; `workerEntry` is the worker thread's script, `lsp` starts the language server from its own bundle. */
export function runCommand(workerEntry?: URL, lsp?: () => Promise<number>): void {
  // A reader that stops early (`polecheck … | head`) is not an error.
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (err: NodeJS.ErrnoException) => {
      if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
      throw err;
    });
  }
  const write = (stream: NodeJS.WriteStream) => (s: string) => {
    stream.write(s);
  };
  const io = { stdout: write(process.stdout), stderr: write(process.stderr), env: process.env, isTTY: Boolean(process.stdout.isTTY) };
  run(process.argv.slice(2), io, { workerEntry, lsp }).then(
    (code) => {
      process.exitCode = code;
    },
    (err: unknown) => {
      // As an uncaught exception would: the stack on standard error, exit status 1.
      process.exitCode = 1;
      throw err;
    },
  );
}
