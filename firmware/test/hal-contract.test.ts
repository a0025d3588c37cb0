// The HAL contract cannot drift from what the firmware actually imports and exports: every
// import of the release wasm has its section in docs/porting.md and an implementation in the
// template port, the C harness, the scripted port and the simulated tester; every export the
// guide names exists.

import { readFileSync } from "node:fs";
import { describe, expect, it } from "vitest";
import { firmwareModule } from "../../host/src/sim/firmware-image.ts";

const read = (rel: string) => readFileSync(new URL(`../../${rel}`, import.meta.url), "utf8");
const mod = firmwareModule("release");
const imports = WebAssembly.Module.imports(mod);
const exports = WebAssembly.Module.exports(mod).map((e) => e.name);

describe("HAL contract", () => {
  it("imports only functions from module hal, one memory page exported, nothing else", () => {
    expect(imports.every((i) => i.module === "hal" && i.kind === "function")).toBe(true);
    expect(exports.sort()).toEqual(["fw_busy", "fw_init", "fw_memory_used", "fw_poll", "fw_rx", "fw_rx_overrun", "memory"]);
  });

  it.each(imports.map((i) => i.name))("hal.%s is documented and implemented by every port", (name) => {
    expect(read("docs/porting.md")).toMatch(new RegExp(`^### \`${name}\\(`, "m"));
    expect(read("firmware/ports/template/port-template.c")).toContain(`Z_halZ_${name}(`);
    expect(read("firmware/ports/host/harness.c")).toContain(`Z_halZ_${name}(`);
    expect(read("firmware/test/scripted-port.ts")).toMatch(new RegExp(`\\b${name}: `));
    expect(read("host/src/sim/sim-tester.ts")).toMatch(new RegExp(`\\b${name}: `));
  });

  it.each(exports.filter((e) => e !== "memory"))("export %s is described in the porting guide", (name) => {
    expect(read("docs/porting.md")).toContain(`\`${name}(`);
  });
});
