// The plotting library and the DOM it draws into: imported only by the HTML
// writer, so neither is loaded by `check`. The build bundles this module on
// its own (dist/html-libs.cjs, see scripts/build.mjs), outside the command's
// bundle.
import * as Plot from '@observablehq/plot';
import { parseHTML } from 'linkedom';

export { Plot, parseHTML };
