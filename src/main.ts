// Process entry point of the bundled command.
import { main } from './cli';

const write = (stream: NodeJS.WriteStream) => (s: string) => {
  stream.write(s);
};
process.exitCode = main(process.argv.slice(2), { stdout: write(process.stdout), stderr: write(process.stderr), env: process.env, isTTY: Boolean(process.stdout.isTTY) });
