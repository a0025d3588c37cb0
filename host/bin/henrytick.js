#!/usr/bin/env node
import { main } from "../dist/cli/main.js";

// A reader that goes away (`henrytick scenarios | head -1`) closes the pipe: stop quietly, as
// command-line tools do, instead of dying on an unhandled EPIPE. Files the command writes (logs,
// captures, profiles) are written record by record, so nothing earlier is lost.
for (const stream of [process.stdout, process.stderr]) {
  stream.on("error", (err) => {
    if (err && err.code === "EPIPE") process.exit(process.exitCode ?? 0);
    throw err;
  });
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
