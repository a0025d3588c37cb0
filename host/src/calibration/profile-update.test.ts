// How results enter a profile (profile-update.ts) and what a profile lists (profile-terms.ts):
// the rules every caller shares. Figures are invented for the checks.

import { describe, expect, it } from "vitest";
import { emptyProfile, validateProfile } from "./profile-schema.ts";
import type { TankEntry, TimebaseEntry } from "./profile-schema.ts";
import { chooseTimebase, enteredTimebase, referenceThroughLeads, tankChanges, withEntry, withTankEntries, withTimebase } from "./profile-update.ts";
import { profileTerms } from "./profile-terms.ts";
import { checkFirstReading, likelyReferenceValue } from "./reference-inductor.ts";
import { checkParallelCapacitor } from "./parallel-capacitor.ts";

const T0 = new Date("2026-01-02T03:04:05Z");
const tank = (index: number, c_f: number, nominal_f: number): TankEntry => ({
  index, nominal_f, c_f, u_f: c_f * 1e-4, shared_u_rel: 3e-4, timebase_ppm: 0, method: "reference-inductor", time: T0.toISOString(), detail: "test",
});

describe("a result enters the profile", () => {
  it("tank entries replace those of the same index and stay sorted", () => {
    const p = { ...emptyProfile("HT-1", T0), tanks: [tank(2, 100.4e-9, 100e-9), tank(0, 1.003e-9, 1e-9)] };
    const q = withTankEntries(p, [tank(0, 1.004e-9, 1e-9), tank(1, 9.98e-9, 10e-9)], new Date("2026-01-03T00:00:00Z"));
    expect(q.tanks.map((t) => [t.index, t.c_f])).toEqual([[0, 1.004e-9], [1, 9.98e-9], [2, 100.4e-9]]);
    expect(q.updated).toBe("2026-01-03T00:00:00.000Z");
    expect(p.tanks).toHaveLength(2); // the input is not changed
  });

  it("the reference rings in series with the nulled leads: their value and uncertainty are added", () => {
    const p = withEntry(emptyProfile("HT-1", T0), "leads", { l_h: 30e-9, u_h: 0.2e-9, method: "clips-shorted", time: T0.toISOString(), detail: "" });
    const r = referenceThroughLeads({ inductance_h: 330e-6, u_inductance_h: 0.1e-6, label: "R1" }, p);
    expect(r.inductance_h).toBeCloseTo(330.03e-6, 15);
    expect(r.u_inductance_h).toBeCloseTo(Math.hypot(0.1e-6, 0.2e-9), 15);
    expect(r.label).toBe("R1 plus the leads' 30 nH");
    expect(referenceThroughLeads({ inductance_h: 1e-3, u_inductance_h: 1e-6 }, emptyProfile("HT-1", T0)).inductance_h).toBe(1e-3);
  });

  it("the change check compares like with like: a tank calibrated on the terminals is taken with the fixture added", () => {
    const fixture = { c_f: 18e-12, u_f: 0.2e-12, method: "terminals-vs-clips" as const, time: T0.toISOString(), detail: "" };
    const p = withEntry(withTankEntries(emptyProfile("HT-1", T0), [tank(0, 1.040e-9, 1e-9)]), "fixture", fixture);
    const onTerminals = { ...tank(0, 1.022e-9, 1e-9), fixture_included: false };
    expect(tankChanges(p, [onTerminals])[0]).toMatchObject({ against: "previous", large: false });
    expect(Math.abs(tankChanges(p, [onTerminals])[0].change_rel)).toBeLessThan(1e-9);
    // Without the fixture added, the same tank would look 1.7 % lower than before.
    expect(tankChanges({ ...p, fixture: undefined }, [onTerminals])[0].large).toBe(true);
  });

  it("a less certain timebase does not replace a better stored one; an equal or better one does", () => {
    const entered = enteredTimebase(11.5, 0.5, T0);
    const measured: TimebaseEntry = { ppm: 6, u_ppm: 30, method: "host-clock", time: T0.toISOString(), detail: "" };
    const worse = chooseTimebase(entered, measured);
    expect(worse.replace).toBe(false);
    expect(worse.summary).toMatch(/less certain than the stored entered timebase \+11\.5 ppm ± 1\.0 ppm \(k = 2\)/);
    expect(chooseTimebase(measured, entered).replace).toBe(true);
    expect(chooseTimebase(undefined, measured).replace).toBe(true);
    expect(() => enteredTimebase(2000, 1)).toThrow(expect.objectContaining({ code: "NONSENSE_RESULT" }));
    expect(withTimebase(emptyProfile("HT-1", T0), entered).timebase).toEqual(entered);
  });
});

describe("every stored term is listed with its uncertainty and provenance", () => {
  it("tanks, thresholds, timebase, leads and skew, each with value, u, unit and where it came from", () => {
    let p = withTankEntries(emptyProfile("HT-1", T0), [tank(3, 0.9962e-6, 1e-6)]);
    p = withEntry(p, "thresholds", { ratio: -7.7, u_ratio: 0.12, thresholds_v: [0.0354, -0.0046], method: "threshold-fit", time: T0.toISOString(), detail: "4 captures" });
    p = withTimebase(p, enteredTimebase(11.5, 0.5, T0));
    p = withEntry(p, "leads", { l_h: 30.1e-9, u_h: 0.2e-9, method: "clips-shorted", time: T0.toISOString(), detail: "3 rings" });
    p = withEntry(p, "skew", { skew_s: 20.3e-9, u_skew_s: 1.1e-9, method: "skew-fit", time: T0.toISOString(), detail: "4 rings" });
    const terms = profileTerms(validateProfile(JSON.parse(JSON.stringify(p))));
    expect(terms.map((t) => t.term)).toEqual(["tank 3", "thresholds", "timebase", "leads", "skew"]);
    const skew = terms.find((t) => t.term === "skew")!;
    expect(skew).toMatchObject({ value: 20.3e-9, u: 1.1e-9, unit: "s", method: "skew-fit", detail: "4 rings" });
    expect(skew.text).toBe("20.3 ns ± 2.2 ns (k = 2)");
    expect(terms.find((t) => t.term === "leads")!.text).toBe("30.10 nH ± 0.40 nH (k = 2)");
    expect(terms.find((t) => t.term === "timebase")!.text).toBe("+11.5 ppm ± 1.0 ppm (k = 2)");
    // As applied today: calibrated at 0 ppm, rescaled by (1/(1 + 11.5e-6))² to 996.18 nF.
    expect(terms.find((t) => t.term === "tank 3")!.text).toMatch(/^996\.18 nF ± 0\.20 nF \(k = 2\), −0\.38 % from nominal 1 µF$/);
  });
});

describe("what is refused before any pulse, or after the first", () => {
  it("a reference whose first reading is a power of ten away names the likely intended value", () => {
    expect(likelyReferenceValue(33e-6, 331.5e-6)).toBeCloseTo(330e-6, 15);
    expect(likelyReferenceValue(330e-6, 250e-6)).toBeUndefined();
    expect(() => checkFirstReading({ inductance_h: 33e-6, u_inductance_h: 0.1e-6 }, 331.5e-6))
      .toThrow(expect.objectContaining({ code: "REFERENCE_MISMATCH", likely_h: 330e-6, reading_h: 331.5e-6 }));
    expect(() => checkFirstReading({ inductance_h: 330e-6, u_inductance_h: 0.1e-6 }, 340e-6)).not.toThrow();
  });

  it("a capacitor too small for the tank is refused with values in units, not raw floats", () => {
    let msg = "";
    try {
      checkParallelCapacitor(2, 100e-9, { capacitance_f: 1e-9, u_capacitance_f: 5e-12 });
    } catch (e) {
      msg = (e as Error).message;
      expect((e as { code: string }).code).toBe("OUT_OF_SPAN");
    }
    expect(msg).toMatch(/the added 1 nF is under 5 % of tank 2 \(100 nF\).*30 nF to 300 nF/);
    expect(msg).not.toMatch(/e-\d/);
  });
});
