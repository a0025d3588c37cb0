// Locates and compiles the firmware's release wasm (built by `npm install`).

import { readFileSync, existsSync } from "node:fs";
import { dirname, join } from "node:path";
import { fileURLToPath } from "node:url";

export function firmwareWasmPath(): string {
  return join(dirname(fileURLToPath(import.meta.url)), "..", "..", "..", "firmware", "build", "henrytick.wasm");
}

let cached: WebAssembly.Module | null = null;

export function firmwareModule(): WebAssembly.Module {
  if (cached) return cached;
  const path = firmwareWasmPath();
  if (!existsSync(path)) {
    throw new Error(`firmware image not found at ${path}; run "npm install" (or "npm run build") at the repository root to build it`);
  }
  cached = new WebAssembly.Module(readFileSync(path));
  return cached;
}
