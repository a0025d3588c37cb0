// Second pass of cycle bookkeeping, with a fitted model: each edge gets the half-cycle whose
// model crossing lies nearest in model phase, which follows the threshold delays asin(V/A) into
// the tail where a straight line would slip. Where the model envelope no longer reaches the
// threshold the crossing is taken at the model's peak (noise on the comparator input still
// makes such edges). Two edges of one level in one half-cycle (chatter, glitch pairs, a switch
// transient) keep the one with the smaller level-crossing residual.

import { P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";

export const REASON_DUPLICATE = "second edge in one half-cycle (chatter or glitch)";

/**
 * Re-indexes every edge of `e` (overwriting e.m) from the model p. `sd_v[k]` scales the
 * residuals compared between duplicates (null: plain volts). `reasons[k]` is set for edges that
 * lose their index and cleared for the others. Returns how many indices changed.
 */
export function reassignHalfCycles(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number, sd_v: Float64Array | null,
  reasons: (string | null)[],
): number {
  const wd = p[P_WD];
  const phi = p[P_PHI];
  const alpha = p[P_ALPHA];
  const a0 = Math.exp(p[P_LNA]);
  const twoPi = 2 * Math.PI;
  let changed = 0;
  const last = [-1, -1]; // last kept edge of each level
  const lastScore = [0, 0];
  for (let k = 0; k < e.n; k++) {
    const rise = e.rising[k] === 1;
    const level = rise ? vh_v : vl_v;
    const t = e.t_s[k];
    const amp = a0 * Math.exp(-alpha * t);
    const u = Math.max(-1, Math.min(1, level / amp));
    const psi = wd * t - phi - (rise ? 1 : -1) * Math.asin(u);
    let m = rise ? 2 * Math.round(psi / twoPi) : 2 * Math.round((psi - Math.PI) / twoPi) + 1;
    const old = e.m[k];
    reasons[k] = null;
    const lv = rise ? 1 : 0;
    const prev = last[lv];
    let score = NaN; // level-crossing residual in sd, needed only to settle duplicates
    if (prev >= 0 && e.m[prev] === m) {
      score = Math.abs(amp * Math.sin(wd * t - phi) - level) / (sd_v ? sd_v[k] : 1);
      if (lastScore[lv] !== lastScore[lv]) {
        const tp = e.t_s[prev];
        const ap = a0 * Math.exp(-alpha * tp);
        lastScore[lv] = Math.abs(ap * Math.sin(wd * tp - phi) - level) / (sd_v ? sd_v[prev] : 1);
      }
      if (score < lastScore[lv]) {
        e.m[prev] = NaN;
        reasons[prev] = REASON_DUPLICATE;
        changed++;
      } else {
        reasons[k] = REASON_DUPLICATE;
        m = NaN;
      }
    }
    e.m[k] = m;
    if (m === m) {
      last[lv] = k;
      lastScore[lv] = score;
    }
    if (!(m === old || (m !== m && old !== old))) changed++;
  }
  return changed;
}
