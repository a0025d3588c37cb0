// Builds the release firmware for any board file without touching the committed board.ts: the
// compiler is handed the board's generated source in place of assembly/board.ts.
//   npx tsx firmware/tools/build-board.ts NAME    writes firmware/build/boards/NAME/henrytick.wasm

import { mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import asc from "assemblyscript/asc";
import { boardNames, boardSource, loadBoard } from "./board-source.ts";

const FIRMWARE = fileURLToPath(new URL("../", import.meta.url));

/** Where the command line puts a board's release image (ignored by git). */
export function boardWasmPath(name: string): string {
  return join(FIRMWARE, "build", "boards", name, "henrytick.wasm");
}

/** Compiles the release image for one board (the asconfig.json release target); returns the wasm. */
export async function compileBoardFirmware(name: string): Promise<Uint8Array> {
  const source = boardSource(loadBoard(name));
  const boardTs = resolve(FIRMWARE, "assembly", "board.ts");
  let wasm: Uint8Array | undefined;
  let stderr = "";
  const { error } = await asc.main(
    ["assembly/index.ts", "--baseDir", FIRMWARE, "--config", "asconfig.json", "--target", "release", "--outFile", "board.wasm", "--textFile", "board.wat"],
    {
      readFile: (file: string, baseDir: string) => {
        const path = resolve(baseDir, file);
        if (path === boardTs) return source;
        try {
          return readFileSync(path, "utf8");
        } catch {
          return null;
        }
      },
      // Nothing goes to disk here: the image is returned, the text form dropped.
      writeFile: (file: string, contents: Uint8Array | string) => {
        if (file.endsWith(".wasm") && typeof contents !== "string") wasm = contents;
      },
      stdout: { write: () => true },
      stderr: { write: (s: string) => ((stderr += s), true) },
    },
  );
  if (error || !wasm) throw new Error(`building the firmware for board "${name}" failed: ${error?.message ?? "no image written"}\n${stderr}`);
  return wasm;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const name = process.argv[2];
  if (!name) {
    process.stderr.write(`usage: npx tsx firmware/tools/build-board.ts NAME   (boards: ${boardNames().join(", ")})\n`);
    process.exit(2);
  }
  compileBoardFirmware(name).then((wasm) => {
    const out = boardWasmPath(name);
    mkdirSync(join(out, ".."), { recursive: true });
    writeFileSync(out, wasm);
    process.stdout.write(`${out}\n`);
  }, (e) => {
    process.stderr.write(`${(e as Error).message}\n`);
    process.exit(1);
  });
}
