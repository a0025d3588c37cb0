// Builds the release firmware for any board file without touching the committed board.ts: the
// compiler is handed the board's generated source in place of assembly/board.ts. The image is
// kept with the digest of every file the compiler read (and its version), and reused while they
// all still match, so the test files that each need a board's image compile it once.
//   npx tsx firmware/tools/build-board.ts NAME    writes firmware/build/boards/NAME/henrytick.wasm

import { createHash } from "node:crypto";
import { mkdirSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { boardNames, boardSource, loadBoard } from "./board-source.ts";

const FIRMWARE = fileURLToPath(new URL("../", import.meta.url));

/** Where the command line puts a board's release image (ignored by git). */
export function boardWasmPath(name: string): string {
  return join(FIRMWARE, "build", "boards", name, "henrytick.wasm");
}

const ASC_VERSION: string = JSON.parse(readFileSync(createRequire(import.meta.url).resolve("assemblyscript/package.json"), "utf8")).version;
const digest = (text: string) => createHash("sha256").update(text).digest("hex");

/** A kept image: the compiler's version, the digest of each file it read, the wasm (base64). */
interface KeptImage {
  asc: string;
  files: Record<string, string>;
  wasm: string;
}

/** Where a board's kept image lives by default (ignored by git). */
export function keptImagePath(name: string): string {
  return join(FIRMWARE, "build", "boards", name, "kept-image.json");
}

/** The kept image when every file it was built from is unchanged, else undefined. */
function keptImage(keptPath: string, boardTs: string, source: string): Uint8Array | undefined {
  let kept: KeptImage;
  try {
    kept = JSON.parse(readFileSync(keptPath, "utf8"));
  } catch {
    return undefined;
  }
  if (kept.asc !== ASC_VERSION || !kept.files[boardTs]) return undefined;
  for (const [path, hash] of Object.entries(kept.files)) {
    let text: string;
    try {
      text = path === boardTs ? source : readFileSync(path, "utf8");
    } catch {
      return undefined;
    }
    if (digest(text) !== hash) return undefined;
  }
  return new Uint8Array(Buffer.from(kept.wasm, "base64"));
}

/**
 * The release image for one board (the asconfig.json release target): the kept one at `keptPath`
 * while its inputs are unchanged, else compiled and kept there.
 */
export async function compileBoardFirmware(name: string, keptPath: string = keptImagePath(name)): Promise<Uint8Array> {
  const source = boardSource(loadBoard(name));
  const boardTs = resolve(FIRMWARE, "assembly", "board.ts");
  const reused = keptImage(keptPath, boardTs, source);
  if (reused) return reused;
  const files: Record<string, string> = {};
  // Loaded only to compile: the compiler (binaryen) takes seconds to start.
  const asc = (await import("assemblyscript/asc")).default;
  let wasm: Uint8Array | undefined;
  let stderr = "";
  const { error } = await asc.main(
    ["assembly/index.ts", "--baseDir", FIRMWARE, "--config", "asconfig.json", "--target", "release", "--outFile", "board.wasm", "--textFile", "board.wat"],
    {
      readFile: (file: string, baseDir: string) => {
        const path = resolve(baseDir, file);
        let text: string;
        try {
          text = path === boardTs ? source : readFileSync(path, "utf8");
        } catch {
          return null;
        }
        files[path] = digest(text);
        return text;
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
  // Written whole and renamed into place, so a reader never sees half a file.
  const kept = keptPath;
  mkdirSync(join(kept, ".."), { recursive: true });
  const part = `${kept}.${process.pid}.tmp`;
  writeFileSync(part, JSON.stringify({ asc: ASC_VERSION, files, wasm: Buffer.from(wasm).toString("base64") } satisfies KeptImage));
  renameSync(part, kept);
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
