// Preloaded into a `node host/bin/henrytick.js` child by the cli bench section (node --import):
// at exit it writes the child's own CPU time (user + system, all threads, from process start)
// to the file named by HENRYTICK_BENCH_CPU_FILE and, when HENRYTICK_BENCH_LOAD_FILE is set,
// registers a module hook that appends the URL of every module loaded to that file.

import { writeFileSync } from "node:fs";
import { register } from "node:module";

const cpuFile = process.env.HENRYTICK_BENCH_CPU_FILE;
if (cpuFile) {
  process.on("exit", () => {
    const { user, system } = process.cpuUsage();
    writeFileSync(cpuFile, JSON.stringify({ cpu_ms: (user + system) / 1000 }));
  });
}

const loadFile = process.env.HENRYTICK_BENCH_LOAD_FILE;
if (loadFile) {
  writeFileSync(loadFile, "");
  const hook = `
import { appendFileSync } from "node:fs";
export async function load(url, context, next) {
  appendFileSync(${JSON.stringify(loadFile)}, url + "\\n");
  return next(url, context);
}`;
  register(`data:text/javascript,${encodeURIComponent(hook)}`);
}

