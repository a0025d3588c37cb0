// The library gives codes, fields and its own option names; the command line maps those to its
// flags (cliWording). A library message that quotes a flag would tell a program calling the
// library to set something it does not have.

import { readdirSync, readFileSync, statSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { resolvePeakLimit } from "../ranging/safety.ts";
import { cliWording } from "./errors.ts";

const SRC = fileURLToPath(new URL("..", import.meta.url));

function sources(dir: string): string[] {
  return readdirSync(dir).flatMap((n) => {
    const p = join(dir, n);
    if (statSync(p).isDirectory()) return sources(p);
    return p.endsWith(".ts") && !p.endsWith(".test.ts") ? [p] : [];
  });
}

describe("library messages and the command line's flags", () => {
  it("no library message quotes a CLI flag (the command line and the simulator's process arguments aside)", () => {
    const offenders: string[] = [];
    for (const file of sources(SRC)) {
      {
        if (/[\\/](cli|sim)[\\/]/.test(file.slice(SRC.length - 1)) || file.endsWith(".generated.ts")) continue;
        readFileSync(file, "utf8").split("\n").forEach((line, i) => {
          const t = line.trim();
          if (t.startsWith("//") || t.startsWith("*") || t.startsWith("/*")) return;
          // A flag inside a string or template literal: a quote or a space before "--name".
          if (/["'`][^"'`]*(?:^|[\s(])--[a-z][a-z-]+/.test(t)) offenders.push(`${file.slice(SRC.length)}:${i + 1}: ${t.slice(0, 100)}`);
        });
      }
    }
    expect(offenders).toEqual([]);
  });

  it("maps the library's option names to the flags that set them", () => {
    expect(cliWording("raise max_peak_v up to the clamp; a shorter charge_us; confirm with hazardous_ok")).toBe("raise --max-peak-v up to the clamp; a shorter --charge-us; confirm with --hazardous-ok");
    expect(cliWording("leave the setting to automatic ranging (options drive, tank unset)")).toBe("leave the setting to automatic ranging (no --drive or --tank)");
    expect(cliWording("enter a timebase measured with a frequency counter (the profile's timebase entry, ppm and u_ppm), or")).toMatch(/\(calibrate timebase --ppm P --u-ppm U\)/);
    expect(cliWording("give the port's path directly, e.g. /dev/ttyACM0")).toBe("give the port's path directly with --port, e.g. /dev/ttyACM0");
    // A field name inside a longer word is left alone.
    expect(cliWording("the_max_peak_value")).toBe("the_max_peak_value");
    const basis = resolvePeakLimit(undefined, 36, false).basis.join("\n");
    expect(basis).toMatch(/hazardous_ok cannot take effect/);
    expect(cliWording(basis)).toMatch(/--hazardous-ok cannot take effect/);
  });
});
