// The package's own version, read from its package.json (the same file in a source checkout,
// where this module runs from src/, and in an installed package, where it runs from dist/).

import { readFileSync } from "node:fs";

let cached: string | undefined;

/** The henrytick package version, e.g. "0.1.0" ("?" only if package.json cannot be read). */
export function packageVersion(): string {
  if (cached !== undefined) return cached;
  try {
    const version = JSON.parse(readFileSync(new URL("../package.json", import.meta.url), "utf8")).version;
    cached = typeof version === "string" ? version : "?";
  } catch {
    cached = "?";
  }
  return cached;
}
