// Locates and compiles the firmware's release wasm (built by `npm install`).

import { readFileSync, existsSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

/** "release" is the shipped image; "probe" adds fw_heap_mark for the no-allocation test. */
export type FirmwareVariant = "release" | "probe";

export function firmwareWasmPath(variant: FirmwareVariant = "release"): string {
  const file = variant === "release" ? "henrytick.wasm" : "henrytick.probe.wasm";
  return join(dirname(fileURLToPath(import.meta.url)), "..", "..", "..", "firmware", "build", file);
}

const cache = new Map<FirmwareVariant, WebAssembly.Module>();

export function firmwareModule(variant: FirmwareVariant = "release"): WebAssembly.Module {
  const cached = cache.get(variant);
  if (cached) return cached;
  const path = firmwareWasmPath(variant);
  if (!existsSync(path)) {
    throw new Error(`firmware image not found at ${path}; run "npm install" (or "npm run build") at the repository root to build it`);
  }
  const mod = new WebAssembly.Module(readFileSync(path));
  cache.set(variant, mod);
  return mod;
}
