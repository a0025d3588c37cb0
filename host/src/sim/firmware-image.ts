// Locates and compiles the firmware's release wasm, which the simulated tester runs.
//
// Two places hold it: a source checkout builds it into firmware/build/ (`npm install` or
// `npm run build` at the repository root), and the henrytick package carries a copy in its own
// firmware/ folder (put there when the package is packed). A checkout is recognised by the
// firmware workspace beside the host package, so an installed package never reaches outside itself.

import { readFileSync, existsSync } from "node:fs";
import { fileURLToPath } from "node:url";
import { CodedError } from "../coded-error.ts";

/** "release" is the shipped image; "probe" adds fw_heap_mark for the no-allocation test. */
export type FirmwareVariant = "release" | "probe";

const FILES: Record<FirmwareVariant, string> = { release: "henrytick.wasm", probe: "henrytick.probe.wasm" };

/** The host package's folder (host/ in a checkout, node_modules/henrytick when installed). */
const PACKAGE_DIR = new URL("../../", import.meta.url);

export class FirmwareImageError extends CodedError<"FIRMWARE_IMAGE_MISSING"> {
  constructor(
    readonly path: string,
    message: string,
  ) {
    super("FIRMWARE_IMAGE_MISSING", message);
  }
}

function inSourceCheckout(): boolean {
  const manifest = new URL("../firmware/package.json", PACKAGE_DIR);
  if (!existsSync(manifest)) return false;
  try {
    return JSON.parse(readFileSync(manifest, "utf8")).name === "@henrytick/firmware";
  } catch {
    return false;
  }
}

/** Where the simulator loads the firmware image from (the file may be missing; see firmwareModule). */
export function firmwareWasmPath(variant: FirmwareVariant = "release"): string {
  const url = inSourceCheckout()
    ? new URL(`../firmware/build/${FILES[variant]}`, PACKAGE_DIR)
    : new URL(`firmware/${FILES[variant]}`, PACKAGE_DIR);
  return fileURLToPath(url);
}

function missing(variant: FirmwareVariant, path: string): FirmwareImageError {
  if (inSourceCheckout()) {
    return new FirmwareImageError(path, `firmware image not found at ${path}; build it with "npm run build" at the repository root (or "npm run build -w firmware")`);
  }
  if (variant === "probe") {
    return new FirmwareImageError(path, `the firmware's heap-probe image is built only in a source checkout (firmware/build/${FILES.probe}); the package ships the release image alone`);
  }
  return new FirmwareImageError(path, `firmware image not found at ${path}: the henrytick package is incomplete; reinstall it (npm install henrytick)`);
}

const cache = new Map<FirmwareVariant, WebAssembly.Module>();

/** The compiled firmware image; throws FirmwareImageError (FIRMWARE_IMAGE_MISSING) when absent. */
export function firmwareModule(variant: FirmwareVariant = "release"): WebAssembly.Module {
  const cached = cache.get(variant);
  if (cached) return cached;
  const path = firmwareWasmPath(variant);
  if (!existsSync(path)) throw missing(variant, path);
  const mod = new WebAssembly.Module(readFileSync(path));
  cache.set(variant, mod);
  return mod;
}
