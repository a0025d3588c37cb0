// Help text that the general page (cli/main.ts) shows beside a command's own: kept apart from the
// command modules so that `henrytick --help` loads none of them.

export const CALIBRATE_USAGE = `  henrytick calibrate show (--sim | --port PATH)      the tester's calibration profile
  henrytick calibrate reference … --ref-h L --ref-u-h U [--ref-cs-f C --ref-u-cs-f U] [--tanks 0,1,…]
                                       reference inductor on the clips → each tank's capacitance
  henrytick calibrate parallel … --tank N --cap-f C --cap-u-f U [--part-cs-f C]
                                       any coil on the clips, rung without and with a known capacitor
  henrytick calibrate thresholds …     high-Q coil on the clips → comparator threshold ratio
  henrytick calibrate skew … [--tanks A,B]   one coil rung on two tanks → comparator rise/fall delay skew
  henrytick calibrate timebase … [--seconds N]     time the tester's crystal against this computer's clock (default 60 s)
  henrytick calibrate timebase … --ppm P --u-ppm U   or enter a crystal error measured with a frequency counter
  henrytick calibrate short … [--repeats N]   clips shorted to each other → the leads' inductance, subtracted from readings
  henrytick calibrate restore …        make the previous profile current again
    (uncertainties are standard, k = 1; values take SI prefixes: 330u, 4n7, 0.5p;
     --config-dir DIR overrides $HENRYTICK_CONFIG_DIR / $XDG_CONFIG_HOME/henrytick)`;

export const WATCH_USAGE = `  --watch              read continuously: trend line and stability (Ctrl-C stops)
  --big                with --watch: the value in large characters
  --count N            with --watch: stop after N readings
  --interval-ms N      with --watch: pause between readings (default 300)
  --csv                one CSV row per reading (with --watch: reading, time and stability first)
  --series E12         with --watch: also show the nearest E6 … E192 preferred value`;
