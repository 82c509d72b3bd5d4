/**
 * The stratiflow command line as its own process, from the sources (run with `node --import
 * tsx`): for the tests that need real standard streams, such as a pipe the reader closes.
 */
import { main } from '../../src/cli/main.js';

main(process.argv).then((code) => {
  process.exitCode = code;
});
