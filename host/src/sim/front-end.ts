// One pulse on the simulated front end: charge the part through the selected drive resistor,
// open the switch, solve the ring exactly (physics/front-end-circuit.ts) and turn it into the
// comparator edges the capture hardware records.

import type { FrontEndCircuit } from "../physics/front-end-circuit.ts";
import { solveRing, stateAtOpening } from "../physics/front-end-circuit.ts";
import type { RingWave } from "../physics/ring-wave.ts";
import { waveAmplitude } from "../physics/ring-wave.ts";
import type { BoardModel } from "./board-model.ts";
import type { EdgeList } from "./comparator-edges.ts";
import { applyComparator, captureEdges, usesFirstPassage } from "./comparator-edges.ts";
import { physicalEdges, sampledWaveform } from "./comparator-physics.ts";
import { nonlinearCrossings, type Nonlinearities } from "../physics/nonlinear-ring.ts";
import { contactEvents, contactResistance, longestEvent, type ContactChatter } from "./fixture-chatter.ts";
import type { Random } from "./random.ts";
import type { PartModel } from "./scenario.ts";

export interface PulseResult {
  edges: EdgeList;
  /** Null when the part does not ring (overdamped). */
  wave: RingWave | null;
  i0_a: number;
  /** Initial amplitude of the ring at the comparator, volts. */
  peak_v: number;
  /** True when the flyback clamp conducted. */
  clamped: boolean;
}

/** The circuit the part forms with the board's selected drive resistor and tank. */
export function frontEndCircuit(board: BoardModel, part: PartModel, drive: number, tank: number): FrontEndCircuit {
  return {
    // The leads in series with the part; a bare short on bare terminals keeps a picohenry of loop.
    l_h: Math.max(part.inductance_h + (board.lead_h ?? 0), 1e-12),
    rs_ohm: part.series_ohm,
    rp_ohm: part.parallel_ohm ?? Infinity,
    c_f: board.tank_f[tank] + board.fixture_f + part.self_capacitance_f,
    csw_f: Math.max(board.switch_node_f, 1e-18), // a vanishing Csw keeps the third pole finite
    r_ohm: board.drive_ohm[drive],
    supply_v: board.supply_v,
    sense_ohm: board.sense_ohm,
  };
}

export function simulatePulse(
  board: BoardModel, part: PartModel, drive: number, tank: number, charge_s: number,
  capacity: number, rng: Random, window_s: number,
): PulseResult {
  const circuit = frontEndCircuit(board, part, drive, tank);
  const x0 = stateAtOpening(circuit, board.switch_on_ohm, board.diode_v, charge_s);
  let wave: RingWave;
  try {
    wave = solveRing(circuit, x0);
  } catch {
    return { edges: { ticks: [], levels: [] }, wave: null, i0_a: x0.i_a, peak_v: 0, clamped: false };
  }
  const peak = waveAmplitude(wave);
  const saturates = part.saturation_current_a !== undefined;
  const chatter = board.contact_chatter ? chatterOn(board.contact_chatter, circuit, wave, window_s, rng) : {};
  if (!saturates && board.tank_k_per_v2 === 0 && peak <= board.clamp_v && !board.contact_chatter) {
    const edges = captureEdges(wave, board.comparator, board.timer, rng, capacity, window_s);
    return { edges, wave, i0_a: x0.i_a, peak_v: peak, clamped: false };
  }
  // Nonlinear parts or a ring that reaches the clamp: integrate numerically.
  const off = board.comparator.offset_v ?? 0;
  const nl = nonlinearCrossings(
    circuit,
    {
      saturation_a: part.saturation_current_a, saturation_floor: part.saturation_floor_ratio,
      tank_k_per_v2: board.tank_k_per_v2, clamp_v: board.clamp_v, clamp_ohm: board.clamp_ohm, ...chatter,
    },
    [x0.i_a, x0.v_td_v], board.comparator.rising_v + off, board.comparator.falling_v + off, capacity + 64, window_s,
    usesFirstPassage(board.comparator),
  );
  // The integrated ring through the same comparator as a closed-form one: by first passage of
  // ring + noise on the ring sampled at the integrator's steps (a cubic spline through them),
  // else per crossing.
  const edges = nl.samples && nl.samples.t_s.length > 1
    ? physicalEdges(sampledWaveform(nl.samples.t_s, nl.samples.v_v), { ...board.comparator, noise_bw_hz: board.comparator.noise_bw_hz ?? 1e9 }, board.timer, rng, { max_edges: capacity, window_s: Math.min(window_s, nl.samples.t_s[nl.samples.t_s.length - 1]) })
    : applyComparator(nl.times, nl.levels, nl.slopes, board.comparator, board.timer, rng, capacity);
  return { edges, wave, i0_a: x0.i_a, peak_v: nl.peak_v, clamped: nl.clamped };
}

/**
 * A chattering contact's events for this ring (fixture-chatter.ts), as the integrator's extra
 * series resistance. Events are drawn over the ring's life (30 decay times, within the window);
 * an open contact is 200 ω0 L, so the current stops within 1/200 of a radian of the ring while
 * the tank holds its voltage for some 30 periods.
 */
function chatterOn(ch: ContactChatter, c: FrontEndCircuit, wave: RingWave, window_s: number, rng: Random): Pick<Nonlinearities, "extra_series_ohm" | "silence_s"> {
  const w0 = Math.hypot(wave.alpha_per_s, wave.wd_rad_s);
  const events = contactEvents(ch, Math.min(window_s, 30 / Math.max(wave.alpha_per_s, 1e-3)), rng);
  return { extra_series_ohm: contactResistance(events, 200 * w0 * c.l_h), silence_s: longestEvent(events) };
}

/**
 * What a correct analysis must report for this part on this setting when it divides by the
 * tank's nominal capacitance: L_reading = 1 / (w0^2 C_nominal), with w0 of the full circuit.
 * This is the simulator's ground truth for end-to-end checks.
 */
export function expectedReading(board: BoardModel, part: PartModel, drive: number, tank: number, nominal_tank_f: number): { inductance_h: number; q: number; f0_hz: number } {
  const circuit = frontEndCircuit(board, part, drive, tank);
  const wave = solveRing(circuit, { i_a: 1e-3, v_td_v: 0, v_d_v: board.supply_v });
  const w0sq = wave.alpha_per_s ** 2 + wave.wd_rad_s ** 2;
  return { inductance_h: 1 / (w0sq * nominal_tank_f), q: Math.sqrt(w0sq) / (2 * wave.alpha_per_s), f0_hz: Math.sqrt(w0sq) / (2 * Math.PI) };
}
