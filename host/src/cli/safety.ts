// The cautions shown in --help and the README (text only, so the help page loads nothing else;
// the caution a pulsing command prints is in caution.ts). Wording is ours; the levels come from
// IEC 61010-1 (value from memory) and the physics of interrupted inductor current; the figures
// match ranging/safety.ts (a test checks).

export const SAFETY_TEXT = `Safety:
  Interrupting the current in an inductor makes a voltage spike (flyback). henrytick limits
  the ring to 30 V peak by default (on the reference board 28.8 V: 80 % of its 36 V clamp),
  but a transformer's other winding sees that pulse multiplied by its turns ratio (hundreds of
  volts from a mains transformer pulsed on its low-voltage side): give --winding-ratio N (or
  230:12) and ranging keeps the pulse at the limit / N so that winding stays under the limit too.
  Test only parts that are unpowered, disconnected from any circuit and discharged; keep
  fingers off both windings of a transformer while it is pulsed. Above about 42.4 V peak
  (60 V d.c.) IEC 61010-1 treats a part as hazardous live; --hazardous-ok cannot take effect
  on a board whose clamp is below that level. Follow your local codes and leave mains
  equipment to licensed practice.`;

/** Help lines for the options every pulsing command takes. */
export const WINDING_RATIO_HELP = `  --winding-ratio N    the part is one winding of a transformer whose other winding has N times
                       its turns (19, or 230:12 for a 230 V : 12 V transformer pulsed on 12 V):
                       every pulse is kept at the limit / N, so that winding stays under the limit`;

