// Puts the files the henrytick package carries but does not build itself into host/ before
// `npm pack` (prepack: the firmware's release image and the repository's LICENSE) and removes
// them afterwards (postpack), so a source checkout keeps one copy of each.
//   node scripts/pack-assets.mjs add | remove

import { copyFileSync, existsSync, mkdirSync, rmSync } from "node:fs";

const ASSETS = [
  { from: "../firmware/build/henrytick.wasm", to: "firmware/henrytick.wasm", build: 'run "npm run build" at the repository root first' },
  { from: "../LICENSE", to: "LICENSE", build: "the repository root must hold LICENSE" },
];

const mode = process.argv[2];
if (mode === "add") {
  for (const a of ASSETS) {
    if (!existsSync(a.from)) {
      process.stderr.write(`pack-assets: ${a.from} is missing; ${a.build}\n`);
      process.exit(1);
    }
    mkdirSync("firmware", { recursive: true });
    copyFileSync(a.from, a.to);
  }
} else if (mode === "remove") {
  for (const a of ASSETS) rmSync(a.to, { force: true });
  rmSync("firmware", { recursive: true, force: true });
} else {
  process.stderr.write("usage: node scripts/pack-assets.mjs add | remove\n");
  process.exit(2);
}
