// How much static storage a C port backs the firmware's linear memory with: what the release
// build uses once its module has started (fw_memory_used(); it allocates nothing later), plus
// MEMORY_MARGIN_BYTES, rounded up to a whole KiB. The native build passes it to the runtime as
// HT_RT_MEMORY_BYTES; run this file (npx tsx firmware/ports/memory-size.ts) to print the define
// for your own build.

import { readFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

const WASM = join(dirname(fileURLToPath(import.meta.url)), "..", "build", "henrytick.wasm");

/** Spare bytes above the high-water mark: a firmware that allocates nothing after start needs none, this is insurance. */
export const MEMORY_MARGIN_BYTES = 256;

/** fw_memory_used() of a firmware image: instantiated with inert imports, its start function run. */
export function firmwareMemoryUsed(wasm: Uint8Array = readFileSync(WASM)): number {
  const mod = new WebAssembly.Module(wasm);
  const hal: Record<string, () => number> = {};
  for (const i of WebAssembly.Module.imports(mod)) hal[i.name] = () => 0;
  const exports = new WebAssembly.Instance(mod, { hal }).exports as { fw_memory_used?: () => number };
  if (typeof exports.fw_memory_used !== "function") throw new Error("the firmware image has no fw_memory_used export; rebuild it (npm run build -w firmware)");
  return exports.fw_memory_used();
}

/** The backing for a given high-water mark: margin added, rounded up to 1 KiB, at most one page. */
export function memoryBacking(used_bytes: number): number {
  return Math.min(65536, Math.ceil((used_bytes + MEMORY_MARGIN_BYTES) / 1024) * 1024);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const used = firmwareMemoryUsed();
  process.stdout.write(`-DHT_RT_MEMORY_BYTES=${memoryBacking(used)}u  # firmware uses ${used} bytes\n`);
}
