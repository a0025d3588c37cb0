// Every term a profile holds, one row each, with its standard uncertainty and provenance: what
// `calibrate show` lists (as text and as JSON) and what another app can show the same way. Pure.

import { formatMeasured, formatValue } from "../values/format-value.ts";
import { formatWithUncertainty } from "../format/si.ts";
import { COVERAGE_K } from "../analysis/index.ts";
import { tankCapacitanceNow } from "./apply-profile.ts";
import type { CalibrationProfile, Provenance } from "./profile-schema.ts";
import { ppmText } from "./profile-update.ts";

export interface ProfileTerm {
  /** `tank 0` … `tank N`, `thresholds`, `timebase`, `leads`, `fixture`, `skew`. */
  term: string;
  /** The value in force (a tank as applied with today's timebase), in `unit`. */
  value: number;
  /** Its standard uncertainty (k = 1). */
  u: number;
  /** "F", "H", "s", "ppm", or "" for the threshold ratio. */
  unit: string;
  /** Value ± expanded uncertainty (k = 2), the digits following the uncertainty. */
  text: string;
  /** What the term does in a reading. */
  role: string;
  method: Provenance["method"];
  time: string;
  detail: string;
}

/** Terms a profile can hold besides its tanks, in the order they are listed. */
export const PROFILE_TERM_NAMES = ["thresholds", "timebase", "leads", "fixture", "skew"] as const;

const measured = (v: number, u: number, unit: string) => `${formatMeasured(v, COVERAGE_K * u, unit)} (k = ${COVERAGE_K})`;

/** The profile's terms, tanks first (by index), then thresholds, timebase, leads, fixture and skew as stored. */
export function profileTerms(profile: CalibrationProfile): ProfileTerm[] {
  const ppm = profile.timebase?.ppm ?? 0;
  const out: ProfileTerm[] = [];
  const prov = (p: Provenance) => ({ method: p.method, time: p.time, detail: p.detail });
  for (const t of profile.tanks) {
    const now = tankCapacitanceNow(t, ppm);
    out.push({
      term: `tank ${t.index}`, value: now.c_f, u: now.u_f, unit: "F",
      text: `${measured(now.c_f, now.u_f, "F")}, ${formatPercentSigned(now.c_f / t.nominal_f - 1)} from nominal ${formatValue(t.nominal_f, "F", 4)}`,
      role: t.fixture_included === false
        ? "the tank's effective capacitance on the board's terminals; readings add the fixture"
        : "the tank's effective capacitance across the part, clips and leads included", ...prov(t),
    });
  }
  const th = profile.thresholds;
  if (th) {
    const r = formatWithUncertainty(th.ratio, COVERAGE_K * th.u_ratio, "");
    out.push({
      term: "thresholds", value: th.ratio, u: th.u_ratio, unit: "",
      text: `ratio ${r.value} ± ${r.u} (k = ${COVERAGE_K}): ${formatMeasured(th.thresholds_v[0], undefined, "V")} / ${formatMeasured(th.thresholds_v[1], undefined, "V")}`,
      role: "the comparator thresholds the edges are fitted with", ...prov(th),
    });
  }
  const tb = profile.timebase;
  if (tb) out.push({ term: "timebase", value: tb.ppm, u: tb.u_ppm, unit: "ppm", text: ppmText(tb.ppm, tb.u_ppm), role: "the crystal's error, taken out of every frequency", ...prov(tb) });
  const ld = profile.leads;
  if (ld) out.push({ term: "leads", value: ld.l_h, u: ld.u_h, unit: "H", text: measured(ld.l_h, ld.u_h, "H"), role: "the leads' series inductance, subtracted from every reading", ...prov(ld) });
  const fx = profile.fixture;
  if (fx) {
    const into = profile.tanks.filter((t) => t.fixture_included === false).map((t) => t.index);
    out.push({
      term: "fixture", value: fx.c_f, u: fx.u_f, unit: "F", text: measured(fx.c_f, fx.u_f, "F"),
      role: `the clips' and leads' capacitance across the part, added to every uncalibrated tank${into.length ? ` and to tank${into.length > 1 ? "s" : ""} ${into.join(", ")} (calibrated on the terminals)` : ""}; tanks calibrated through the clips hold it already`,
      ...prov(fx),
    });
  }
  const sk = profile.skew;
  if (sk) out.push({ term: "skew", value: sk.skew_s, u: sk.u_skew_s, unit: "s", text: measured(sk.skew_s, sk.u_skew_s, "s"), role: "the comparator's rise minus fall delay, taken out of the rising edges", ...prov(sk) });
  return out;
}

function formatPercentSigned(rel: number): string {
  const p = rel * 100;
  return `${p >= 0 ? "+" : "−"}${Math.abs(p).toFixed(2)} %`;
}
