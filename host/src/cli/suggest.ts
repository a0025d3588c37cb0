// "Did you mean": the nearest known name to a mistyped one, by Levenshtein distance
// (fastest-levenshtein: small, dependency-free and widely used). Kept out of the command modules
// so the help page and usage errors stay light.

import { distance } from "fastest-levenshtein";

/** `; did you mean "--budget"?` for the nearest of `known` within a third of its length (at least 2 edits), else "". */
export function suggest(typed: string, known: readonly string[], prefix = ""): string {
  let best: string | undefined;
  let bestD = Infinity;
  for (const k of known) {
    const d = distance(typed.toLowerCase(), k.toLowerCase());
    if (d < bestD) [best, bestD] = [k, d];
  }
  if (best === undefined || bestD > Math.max(2, Math.floor(best.length / 3))) return "";
  return `; did you mean "${prefix}${best}"?`;
}
