// The one piece of mathjs polecheck uses for expressions: its parser, built
// with create() from the parse factory and its dependencies only (no
// evaluate, no units, no import). scripts/build.mjs bundles this file into its
// own chunk (dist/expr.cjs) that the command loads only when a document holds
// an expression; src/spec/expressions.ts walks the tree it returns and
// evaluates a whitelist of node types itself.

import { create, parseDependencies } from 'mathjs';

export const parse = create({ parseDependencies }, {}).parse;
