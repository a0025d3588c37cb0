// The public API as docs/library.md states it ("Entry points"): every name the main entry exports
// is listed there, and the list names nothing the entry does not export; the simulator's and the
// calibration methods' internals are reachable only by their subpaths (host/src/sim/index.ts,
// host/src/calibration/index.ts), which package-install.test.ts resolves in an installed package.

import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import * as main from "../../host/src/index.ts";
import * as sim from "../../host/src/sim/index.ts";
import * as calibration from "../../host/src/calibration/index.ts";

const doc = readFileSync(new URL("../../docs/library.md", import.meta.url), "utf8");
const mainSection = doc.slice(doc.indexOf("## Entry points"), doc.indexOf("Subpaths:"));
const subpathSection = doc.slice(doc.indexOf("Subpaths:"), doc.indexOf("\n## ", doc.indexOf("Subpaths:")));
const codeNames = (text: string) => new Set([...text.matchAll(/`([A-Za-z_][A-Za-z0-9_]*)`/g)].map((m) => m[1]));
const PROSE = new Set(["henrytick", "exports", "ERR_PACKAGE_PATH_NOT_EXPORTED"]);

describe("the public API", () => {
  it("docs/library.md lists exactly what the main entry exports", () => {
    const listed = [...codeNames(mainSection)].filter((n) => !PROSE.has(n)).sort();
    expect(listed).toEqual(Object.keys(main).sort());
  });

  it("the simulator and the calibration methods are subpaths, not the main entry", () => {
    for (const name of ["SimTester", "referenceBoard", "nominalBoard", "expectedReading", "PtyDevice", "SimTray", "coilOnFormer"]) {
      expect(Object.keys(main), name).not.toContain(name);
      expect(Object.keys(sim), name).toContain(name);
    }
    for (const name of ["propagate", "monteCarlo", "solveTwoCapacitance", "singleTankBudget", "twoTankBudget", "timebaseFromSamples"]) {
      expect(Object.keys(main), name).not.toContain(name);
      expect(Object.keys(calibration), name).toContain(name);
    }
    // What the subpath paragraph names exists where it says.
    for (const name of codeNames(subpathSection)) {
      if (name in sim || name in calibration) continue;
      expect(["sim", "calibration", "schemas"].some((s) => name === s), `${name} is named under Subpaths but exported by neither subpath`).toBe(true);
    }
  });
});
