// Large characters for reading a value across the bench: five rows of block glyphs for the
// digits, point, minus, SI prefixes and H. Our own glyph shapes. Pure: no I/O.

const GLYPHS: Record<string, string[]> = {
  "0": ["████", "█  █", "█  █", "█  █", "████"],
  "1": ["  █ ", " ██ ", "  █ ", "  █ ", " ███"],
  "2": ["████", "   █", "████", "█   ", "████"],
  "3": ["████", "   █", " ███", "   █", "████"],
  "4": ["█  █", "█  █", "████", "   █", "   █"],
  "5": ["████", "█   ", "████", "   █", "████"],
  "6": ["████", "█   ", "████", "█  █", "████"],
  "7": ["████", "   █", "  █ ", " █  ", " █  "],
  "8": ["████", "█  █", "████", "█  █", "████"],
  "9": ["████", "█  █", "████", "   █", "████"],
  ".": [" ", " ", " ", " ", "█"],
  "-": ["    ", "    ", "████", "    ", "    "],
  " ": ["  ", "  ", "  ", "  ", "  "],
  "µ": ["    ", "█  █", "█  █", "███ ", "█   "],
  m: ["     ", "     ", "████ ", "█ █ █", "█ █ █"],
  n: ["    ", "    ", "███ ", "█  █", "█  █"],
  p: ["    ", "███ ", "█  █", "███ ", "█   "],
  k: ["█   ", "█  █", "███ ", "█ █ ", "█  █"],
  H: ["█  █", "█  █", "████", "█  █", "█  █"],
};

export const BIG_ROWS = 5;

/** Five lines of block characters; characters without a glyph are left out. */
export function bigText(text: string): string[] {
  const rows: string[] = Array.from({ length: BIG_ROWS }, () => "");
  let first = true;
  for (const ch of text) {
    const g = GLYPHS[ch];
    if (!g) continue;
    for (let r = 0; r < BIG_ROWS; r++) rows[r] += (first ? "" : " ") + g[r];
    first = false;
  }
  return rows.map((r) => r.replace(/\s+$/, ""));
}
