// The shipped reference front end (docs/hardware/front-end.cir) runs in ngspice (Debian package
// "ngspice"), rings where the simulator's circuit model says it should, and its comparator input
// follows the ring exactly: the DC-coupled divider has no memory to skew the zero crossings.

import { spawnSync } from "node:child_process";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { solveRing } from "../../host/src/physics/front-end-circuit.ts";
import { hasNgspice } from "./spice.ts";

const NETLIST = fileURLToPath(new URL("../../docs/hardware/front-end.cir", import.meta.url));
const title = "docs/hardware/front-end.cir in ngspice" + (hasNgspice ? "" : " (skipped: Debian package ngspice not installed)");

function measured(out: string, name: string): number {
  const m = new RegExp(`^${name}\\s*=\\s*([-+0-9.eE]+)`, "m").exec(out);
  if (!m) throw new Error(`ngspice printed no ${name}:\n${out}`);
  return Number(m[1]);
}

describe.skipIf(!hasNgspice)(title, () => {
  it("rings at the model's frequency, and the comparator sees a quarter of the ring with the same zero crossings", () => {
    const r = spawnSync("ngspice", ["-b", NETLIST], { encoding: "utf8", timeout: 120_000 });
    const out = `${r.stdout}\n${r.stderr}`;
    const fRing = measured(out, "f_ring");
    const fCmp = measured(out, "f_cmp");
    const vpk = measured(out, "vpk");
    const vcmpPk = measured(out, "vcmp_pk");
    expect(Math.abs(fCmp / fRing - 1)).toBeLessThan(1e-5);
    expect(Math.abs(vcmpPk / (vpk / 4) - 1)).toBeLessThan(0.02);
    // The netlist's values in the simulator's closed form: tank + fixture + self-capacitance;
    // the switch node is the blocking diode's junction (15 pF at 0 V, about 4 pF reverse biased)
    // in series with the switch and clamp, taken as 4-15 pF; relay resistance adds loss only.
    for (const csw of [4e-12, 15e-12]) {
      const w = solveRing(
        { l_h: 330e-6, rs_ohm: 0.42, rp_ohm: Infinity, c_f: 100e-9 + 2.5e-12 + 4e-12, csw_f: csw, r_ohm: 100.16, supply_v: 5, sense_ohm: 400e3 },
        { i_a: 0.01, v_td_v: 0, v_d_v: 5 },
      );
      const f = Math.hypot(w.alpha_per_s, w.wd_rad_s) / (2 * Math.PI);
      expect(Math.abs(fRing / f - 1)).toBeLessThan(2e-4);
    }
  });
});
