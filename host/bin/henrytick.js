#!/usr/bin/env node
import { main } from "../dist/cli/main.js";
import { guardOutput, outputStreamError } from "../dist/cli/errors.js";

// Labels, tester ids and messages from files reach these streams: every control character but
// the program's own colour and redraw sequences is shown as a visible stand-in.
guardOutput(process.stdout);
guardOutput(process.stderr);

// A reader that goes away (`henrytick scenarios | head -1`) closes the pipe: stop quietly, as
// command-line tools do, instead of dying on an unhandled EPIPE. Any other output failure
// (`> /dev/full`) is a coded OUTPUT_FAILED with exit status 1, never a stack trace. Files the
// command writes (logs, captures, profiles) are written record by record, so nothing earlier is lost.
for (const [name, stream] of [["stdout", process.stdout], ["stderr", process.stderr]]) {
  stream.on("error", (err) => process.exit(outputStreamError(err, name, process.exitCode)));
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (err) => {
    process.stderr.write(`henrytick: internal error: ${err && err.stack ? err.stack : err}\n`);
    process.exitCode = 70;
  },
);
