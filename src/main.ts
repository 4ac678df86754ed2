// Process entry point of the bundled command.
import { main } from './cli';

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
process.exitCode = main(process.argv.slice(2), { stdout: write(process.stdout), stderr: write(process.stderr), env: process.env, isTTY: Boolean(process.stdout.isTTY) });
