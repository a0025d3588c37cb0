// Help text that the general page (cli/main.ts) shows beside a command's own: kept apart from the
// command modules so that `henrytick --help` loads none of them.

import { WINDING_RATIO_HELP } from "./safety.ts";

export const CALIBRATE_USAGE = `  henrytick calibrate show (--sim | --port PATH)      the tester's calibration profile
  henrytick calibrate reference … --ref-h L --ref-u-h U [--ref-cs-f C --ref-u-cs-f U] [--tanks 0,1,…]
                                       reference inductor on the clips → each tank's capacitance
                                       (a tank moved beyond chance and tolerance is refused unless --accept-shift)
  henrytick calibrate parallel … --tank N --cap-f C --cap-u-f U [--part-cs-f C]
                                       any coil on the clips, rung without and with a known capacitor
  henrytick calibrate thresholds …     high-Q coil on the clips → comparator threshold ratio
  henrytick calibrate skew … [--tanks A,B]   one coil rung on two tanks → comparator rise/fall delay skew
  henrytick calibrate timebase … [--seconds N]     time the tester's crystal against this computer's clock (default 60 s)
  henrytick calibrate timebase … --ppm P --u-ppm U   or enter a crystal error measured with a frequency counter
  henrytick calibrate short … [--repeats N]   clips shorted to each other → the leads' inductance, subtracted from readings
  henrytick calibrate open … [--tanks A,B]    one coil on the terminals, then on the clips → the fixture's capacitance
  henrytick calibrate restore …        make the previous profile current again
    (uncertainties are standard, k = 1; values take SI prefixes: 330u, 4n7, 0.5p;
     --config-dir DIR overrides $HENRYTICK_CONFIG_DIR / $XDG_CONFIG_HOME/henrytick)`;

export const WATCH_USAGE = `  --watch              read continuously: trend line and stability (Ctrl-C stops)
  --big                with --watch: the value in large characters
  --count N            with --watch: stop after N readings
  --interval-ms N      with --watch: pause between readings (default 300)
  --csv                one CSV row per reading (with --watch: reading, time and stability first)
  --series E12         with --watch: also show the nearest E6 … E192 preferred value`;

/** --freq on measure, sort, wind and advise. */
export const FREQ_HELP = `  --freq F             working frequency (10k, 100 kHz): ranging takes the tank whose ring is
                       nearest it and says how near it came (Q and ESR depend on frequency)`;

/** The options of measure, on the general page and on `measure --help`. */
export const MEASURE_OPTIONS = `  --json               print the result as JSON (SI units in the key names)
  --save FILE          also write the capture (edges + settings) to FILE
  --label TEXT         a name for the part, kept in the capture and result
  --auto               choose the setting automatically (the default): probe gently, then step
                       by the advice while every pulse stays inside the limits
  --drive N --tank N   use a fixed setting (indices from "henrytick profile"); it is still
                       checked against the limits before it is pulsed
  --charge-us N        charge time with a fixed setting (default: enough to settle, within the interlock)
${FREQ_HELP}
  --max-peak-v V       ring-peak limit (default 30 V or 80 % of the clamp: 28.8 V on the
                       reference board's 36 V clamp); may be lowered, or raised up to the clamp.
                       Until the first full reading, predictions keep 70 % of it (20.16 V)
${WINDING_RATIO_HELP}
  --hazardous-ok       allow a limit above 42.4 V peak (hazardous live, IEC 61010-1); only with
                       the part and any other winding guarded. It cannot take effect on a board
                       whose clamp is below 42.4 V (the reference board's is 36 V)
  --seed N             noise seed for the simulated tester
  --self-cap           ring on two tanks: L corrected for self-capacitance, Cs and self-resonance
  --budget             show the uncertainty budget (fit, capacitance, timebase, self-capacitance)
  --keep-suspect       give the reading even when it shows a part fault (FIRST_CYCLE_CLIPPED,
                       CORE_SATURATING, FIXTURE_CHATTER, RING_OUTLASTS_WINDOW), marked SUSPECT
                       (human output), "suspect" (--json) or the suspect column (--csv); without
                       it such a reading is refused with the diagnosis and advice (exit status 1)
  --uncalibrated       ignore the tester's calibration profile (nominal tank values)
  --config-dir DIR     where calibration profiles live (default $XDG_CONFIG_HOME/henrytick)`;
