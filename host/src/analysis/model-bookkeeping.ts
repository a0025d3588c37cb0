// Second pass of cycle bookkeeping, with a fitted model: each edge gets the half-cycle whose
// model crossing lies nearest in model phase, which follows the threshold delays asin(V/A) into
// the tail where a straight line would slip. Where the model envelope no longer reaches the
// threshold the crossing is taken at the model's peak (noise on the comparator input still
// makes such edges). Two edges of one level in one half-cycle (chatter, glitch pairs, a switch
// transient) keep the one with the smaller level-crossing residual.

import { P_ALPHA, P_LNA, P_PHI, P_WD, type EdgeSet } from "./edge-model.ts";

export const REASON_DUPLICATE = "second edge in one half-cycle (chatter or glitch)";

/**
 * What a re-indexing leaves to show that another at a nearby model would change nothing
 * (indicesHold): the smallest distance (rad) of an edge's model phase from the boundary between
 * two half-cycles, the largest |V / A(t_k)|, the largest |t_k|, and whether two edges of one
 * level shared a half-cycle (then the choice between them moves with the model).
 */
export interface IndexMargin {
  margin_rad: number;
  max_u: number;
  max_t_s: number;
  duplicates: boolean;
}

/**
 * Re-indexes every edge of `e` (overwriting e.m) from the model p. `sd_v[k]` scales the
 * residuals compared between duplicates (null: plain volts). `reasons[k]` is set for edges that
 * lose their index and cleared for the others. Returns how many indices changed. `margin`, when
 * given, is filled in for indicesHold; `amp_v`, when given, gets each edge's model envelope
 * A0 e^(-alpha t_k) (for chooseResidualForms at the same p).
 */
export function reassignHalfCycles(
  p: ArrayLike<number>, e: EdgeSet, vh_v: number, vl_v: number, sd_v: Float64Array | null,
  reasons: (string | null)[], margin?: IndexMargin, amp_v?: Float64Array,
): number {
  const wd = p[P_WD];
  const phi = p[P_PHI];
  const alpha = p[P_ALPHA];
  const a0 = Math.exp(p[P_LNA]);
  const twoPi = 2 * Math.PI;
  let changed = 0;
  const last = [-1, -1]; // last kept edge of each level
  const lastScore = [0, 0];
  let minMargin = Infinity, maxU = 0, maxT = 0, duplicates = false;
  for (let k = 0; k < e.n; k++) {
    const rise = e.rising[k] === 1;
    const level = rise ? vh_v : vl_v;
    const t = e.t_s[k];
    const amp = a0 * Math.exp(-alpha * t);
    if (amp_v) amp_v[k] = amp;
    const u0 = level / amp;
    const u = Math.max(-1, Math.min(1, u0));
    const psi = wd * t - phi - (rise ? 1 : -1) * Math.asin(u);
    let m = rise ? 2 * Math.round(psi / twoPi) : 2 * Math.round((psi - Math.PI) / twoPi) + 1;
    // m pi is the nearest half-cycle of this level: its neighbours of the level lie 2 pi away.
    minMargin = Math.min(minMargin, Math.PI - Math.abs(psi - m * Math.PI));
    maxU = Math.max(maxU, Math.abs(u0));
    maxT = Math.max(maxT, Math.abs(t));
    const old = e.m[k];
    reasons[k] = null;
    const lv = rise ? 1 : 0;
    const prev = last[lv];
    let score = NaN; // level-crossing residual in sd, needed only to settle duplicates
    if (prev >= 0 && e.m[prev] === m) {
      duplicates = true;
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
  if (margin) {
    // NaN (a non-finite model) fails every comparison in indicesHold.
    margin.margin_rad = minMargin;
    margin.max_u = maxU;
    margin.max_t_s = maxT;
    margin.duplicates = duplicates;
  }
  return changed;
}

/**
 * Whether re-indexing at p would give every edge the index (and the reason, null) it got at
 * `from`, where `margin` was filled in, so that reassignHalfCycles can be skipped: a bound on
 * how far any edge's model phase psi_k = wd t_k - phi -+ asin(u_k) can move, below the smallest
 * margin, with no duplicate pair to settle. With u_k = V / (A0 e^(-alpha t_k)), the model
 * change scales u_k by e^(d ln A0 - d alpha t_k), at most F = e^(|d ln A0| + |d alpha| max t) in
 * either direction, so |d u_k| <= |u_k| (F - 1), and asin moves by at most that over
 * sqrt(1 - (max|u| F)^2) (its largest slope on the interval).
 */
export function indicesHold(from: ArrayLike<number>, p: ArrayLike<number>, margin: IndexMargin): boolean {
  if (margin.duplicates) return false;
  const tMax = margin.max_t_s;
  const f = Math.exp(Math.abs(p[P_LNA] - from[P_LNA]) + Math.abs(p[P_ALPHA] - from[P_ALPHA]) * tMax);
  const uMax = margin.max_u * f;
  if (!(uMax < 1)) return false;
  const shift =
    Math.abs(p[P_WD] - from[P_WD]) * tMax + Math.abs(p[P_PHI] - from[P_PHI]) +
    (margin.max_u * (f - 1)) / Math.sqrt(1 - uMax * uMax);
  // (The phases are computed with rounding errors far below this allowance.)
  return shift + 1e-9 < margin.margin_rad;
}
