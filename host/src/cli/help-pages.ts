// Each command's and sub-command's own help page (`henrytick COMMAND --help`,
// `henrytick calibrate SUB --help`): short, every option, examples that run as shown (a test runs
// the simulated ones). Imported only when a page is asked for.

import { FREQ_HELP, MEASURE_OPTIONS, WATCH_USAGE } from "./help-text.ts";
import { WINDING_RATIO_HELP } from "./safety.ts";

const TESTER = `  --sim [SCENARIO]     the simulated tester with a demo part (henrytick scenarios lists them)
  --port PATH          a tester on a serial port (henrytick ports lists them)
  --seed N             noise seed for the simulated tester`;

const PAGES: Record<string, string> = {
  measure: `henrytick measure — one reading of the part on the clips (1 µH to 1 H)

Usage:
  henrytick measure (--sim [SCENARIO] | --port PATH) [options]

Options:
${TESTER}
${MEASURE_OPTIONS}

Continuous reading:
${WATCH_USAGE}

Examples:
  henrytick measure --sim
  henrytick measure --sim filter-coil-4m7 --json
  henrytick measure --sim drawer-choke-330u --freq 10k
  henrytick measure --sim doorbell-transformer-12v --winding-ratio 230:12
  henrytick measure --sim --watch --count 5
  henrytick measure --port /dev/ttyACM0 --csv >> log.csv
`,
  analyze: `henrytick analyze — analyse saved captures again

Usage:
  henrytick analyze FILE... [--json | --csv]

  The same analysis and part-fault judgement as at the bench; a capture kept as suspect reads as
  suspect again.

Options:
  --json      the result as JSON (an array for several files)
  --csv       a header and one row per file

Examples:
  henrytick measure --sim --save c.json && henrytick analyze c.json --json
`,
  profile: `henrytick profile — the tester's board profile: timer, thresholds, drive resistors, tanks

Usage:
  henrytick profile (--sim | --port PATH) [--json]

Options:
${TESTER}
  --json               the identity and profile as JSON

Examples:
  henrytick profile --sim
`,
  advise: `henrytick advise — probe the part gently, then rank every drive × tank setting with reasons

Usage:
  henrytick advise (--sim [SCENARIO] | --port PATH) [options]

  Nothing stronger than the gentle probe is pulsed. The advice says where the ring-peak limit
  comes from (30 V default, 80 % of the clamp, 70 % while only probed, a turns ratio).

Options:
${TESTER}
  --max-peak-v V       ring-peak limit (default 30 V or 80 % of the clamp)
${WINDING_RATIO_HELP}
  --hazardous-ok       allow a limit above 42.4 V peak (cannot take effect on a clamp below it)
${FREQ_HELP};
                       the settings are then listed in the order ranging would try them
  --json               the estimate, the limit with its derivation and every setting as JSON

Examples:
  henrytick advise --sim solenoid-valve-82m
  henrytick advise --sim drawer-choke-330u --freq 30k
  henrytick advise --sim doorbell-transformer-12v --winding-ratio 19 --json
`,
  scenarios: `henrytick scenarios — the simulated demo parts

Usage:
  henrytick scenarios [--json]

Examples:
  henrytick scenarios
  henrytick scenarios --json
`,
  ports: `henrytick ports — this computer's serial ports

Usage:
  henrytick ports [--json]

Examples:
  henrytick ports
`,
  "sim-device": `henrytick sim-device — serve a simulated tester on a pseudo-terminal (needs socat)

Usage:
  henrytick sim-device [SCENARIO] [--seed N] [--emulated m4|m0]

  Prints one line on stdout, the device path, which "measure --port" opens exactly like
  hardware; Ctrl-C stops it.

Options:
  --seed N             noise seed (default: the scenario's)
  --emulated m4|m0     run the firmware as C on an emulated chip (needs qemu-system-arm)

Examples:
  henrytick sim-device drawer-choke-330u
`,
  calibrate: `henrytick calibrate — calibrate the tester and keep the result in its profile

Usage:
  henrytick calibrate SUB (--sim | --port PATH) [options]     SUB --help shows each one's options

  show         the tester's calibration profile
  reference    a reference inductor on the clips → each tank's capacitance
  parallel     any coil on the clips, rung without and with a known capacitor → one tank
  thresholds   a high-Q coil on the clips → the comparator threshold ratio
  skew         one coil rung on two tanks → the comparator's rise/fall delay skew
  timebase     the tester's crystal against this computer's clock, or an entered counter reading
  short        the clips shorted to each other → the leads' inductance, subtracted from readings
  open         one coil on the board's terminals, then on the clips → the fixture's capacitance
  restore      make the previous profile current again

  Uncertainties are standard (k = 1); values take SI prefixes (330u, 4n7, 0.5p).

Examples:
  henrytick calibrate show --sim
  henrytick calibrate reference --sim --ref-h 330u --ref-u-h 0.1u
`,
  "calibrate show": `henrytick calibrate show — the tester's calibration profile

Usage:
  henrytick calibrate show (--sim | --port PATH) [--json] [--config-dir DIR]

  Every stored term (tanks, thresholds, timebase, leads, fixture, skew) with its value, expanded
  uncertainty (k = 2) and where it came from; --json gives each as a row with its standard u.

Examples:
  henrytick calibrate show --sim
  henrytick calibrate show --sim --json
`,
  "calibrate reference": `henrytick calibrate reference — each tank's capacitance from a reference inductor

Usage:
  henrytick calibrate reference (--sim | --port PATH) --ref-h L --ref-u-h U [options]

Options:
  --ref-h L            the reference's inductance (1 µH to 1 H), e.g. 330u (three bare digits
                       are an inductor code: 330 = 33 µH); the first reading is checked against
                       it and a value off by more than 25 % stops the procedure (REFERENCE_MISMATCH)
  --ref-u-h U          its standard uncertainty, e.g. 0.1u
  --ref-cs-f C         its self-capacitance, if known (e.g. 3p), with --ref-u-cs-f U
  --tanks LIST         tanks to calibrate, e.g. 0,1 (default: every tank; one that cannot ring
                       well with this reference is skipped with the reason)
  --repeats N          rings per tank (default 3)
  --ref-label TEXT     a name for the reference, kept in the profile
  --accept-shift       store it even if a tank moves beyond chance and tolerance (otherwise asked
                       on a terminal, refused elsewhere: CALIBRATION_SHIFT)
  --on-terminals       the reference is on the board's own terminals, clips and leads unplugged:
                       readings then add the fixture's capacitance (calibrate open) to these tanks
  --json               the results as JSON
  --config-dir DIR     where calibration profiles live

Examples:
  henrytick calibrate reference --sim --ref-h 330u --ref-u-h 0.1u --tanks 3
`,
  "calibrate parallel": `henrytick calibrate parallel — one tank from a coil rung without and with a known capacitor

Usage:
  henrytick calibrate parallel (--sim | --port PATH) --tank N --cap-f C --cap-u-f U [options]

Options:
  --tank N             the tank to calibrate (indices from "henrytick profile")
  --cap-f C            the known capacitor, e.g. 100n, with --cap-u-f U its standard uncertainty
  --part-cs-f C        the coil's self-capacitance if known, with --part-u-cs-f U
  --repeats N          rings per state (default 3)
  --accept-shift       store it even if the tank moves beyond chance and tolerance
  --json               the result as JSON
  --config-dir DIR     where calibration profiles live

Examples:
  henrytick calibrate parallel --sim --tank 2 --cap-f 100n --cap-u-f 50p
`,
  "calibrate thresholds": `henrytick calibrate thresholds — the comparator threshold ratio from a high-Q coil

Usage:
  henrytick calibrate thresholds (--sim | --port PATH) [--captures N (default 4)] [--json]

Examples:
  henrytick calibrate thresholds --sim
`,
  "calibrate skew": `henrytick calibrate skew — the comparator's rise/fall delay skew from one coil on two tanks

Usage:
  henrytick calibrate skew (--sim | --port PATH) [--tanks A,B] [--captures N] [--json]

Examples:
  henrytick calibrate skew --sim
`,
  "calibrate timebase": `henrytick calibrate timebase — the tester's crystal error

Usage:
  henrytick calibrate timebase (--sim | --port PATH) [--seconds N]
  henrytick calibrate timebase (--sim | --port PATH) --ppm P --u-ppm U

  Either time the crystal against this computer's clock for N seconds (default 60; keep the
  computer awake), or enter an error measured with a frequency counter. A value less certain
  than the stored one is not stored (CALIBRATION_WORSE) unless confirmed or --accept-shift is given.

Examples:
  henrytick calibrate timebase --sim --seconds 2
  henrytick calibrate timebase --sim --ppm 12.5 --u-ppm 0.5
`,
  "calibrate short": `henrytick calibrate short — the test leads' own inductance, with the clips shorted

Usage:
  henrytick calibrate short (--sim | --port PATH) [--repeats N (default 3)] [--json]

  Short the two clips to each other (metal to metal, nothing else on them); the value is stored
  and subtracted from every later reading. Null again when the leads change.

Examples:
  henrytick calibrate short --sim loop-antenna-on-leads
`,
  "calibrate open": `henrytick calibrate open — the fixture's capacitance, from one coil on the terminals and on the clips

Usage:
  henrytick calibrate open (--sim | --port PATH) [--tanks A,B] [--repeats N (default 3)] [--json]

  Put one coil (some 50 µH to 5 mH) on the board's own terminals with the clips and leads
  unplugged, press Enter; then the same coil on the clips, as parts are measured, and Enter. It
  rings on two tanks each time (default: the smallest it rings on and the next); the difference
  is the fixture's capacitance, stored and added to every tank whose value does not hold it
  (uncalibrated tanks, and tanks calibrated with reference --on-terminals).

Examples:
  henrytick calibrate open --sim rf-choke-in-jig
`,
  "calibrate restore": `henrytick calibrate restore — make the previous profile current again

Usage:
  henrytick calibrate restore (--sim | --port PATH) [--config-dir DIR]

Examples:
  henrytick calibrate restore --sim
`,
};

/** The page for `command` (and `sub` for calibrate), or undefined when it has none here. */
export async function commandHelp(command: string, sub?: string): Promise<string | undefined> {
  if (command === "sort") return (await import("./sort-command.ts")).SORT_HELP;
  if (command === "wind") return (await import("./wind-command.ts")).WIND_HELP;
  if (command === "report") return (await import("./report-command.ts")).REPORT_HELP;
  if (command === "calibrate" && sub && PAGES[`calibrate ${sub}`]) return PAGES[`calibrate ${sub}`];
  return PAGES[command];
}

/** Every command and sub-command with a page (for tests and the general page). */
export const HELP_TOPICS = [...Object.keys(PAGES), "sort", "wind", "report"];
