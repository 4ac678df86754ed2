// The language server's process entry: its own bundle (dist/lsp.cjs, see
// scripts/build.mjs), loaded only by `polecheck lsp`, so a check never loads
// the protocol libraries.

import { ProposedFeatures, createConnection } from 'vscode-languageserver/node';
import { startServer } from './server';

/** Serves LSP over standard input and output until the client says exit (the library then ends the process). */
export function serveLsp(): Promise<number> {
  // Standard output carries the protocol: anything else printed there would corrupt it.
  console.log = console.error;
  console.info = console.error;
  const connection = createConnection(ProposedFeatures.all, process.stdin, process.stdout);
  startServer(connection);
  return new Promise<number>(() => {});
}
