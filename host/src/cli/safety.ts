// The cautions shown in --help and the README. Wording is ours; the levels come from
// IEC 61010-1 (value from memory) and the physics of interrupted inductor current.

export const SAFETY_TEXT = `Safety:
  Interrupting the current in an inductor makes a voltage spike (flyback). henrytick limits
  the ring to 30 V peak by default and its clamp to 36 V, but a transformer's other winding
  sees that pulse multiplied by its turns ratio (hundreds of volts from a mains transformer
  pulsed on its low-voltage side). Test only parts that are unpowered, disconnected from any
  circuit and discharged; keep fingers off both windings of a transformer while it is pulsed.
  Above about 42.4 V peak (60 V d.c.) IEC 61010-1 treats a part as hazardous live. Follow
  your local codes and leave mains equipment to licensed practice.`;
