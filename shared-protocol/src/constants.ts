// Wire protocol v1 constants. Shared verbatim by the firmware (asc) and the host (tsc),
// so this file uses only portable AssemblyScript: integer types, no decorators, no allocation.

/** Protocol version carried in the identify reply and in every capture header. */
export const PROTOCOL_VERSION: i32 = 1;

/** Longest frame, in bytes, including the CRC suffix and the newline. */
export const MAX_LINE_BYTES: i32 = 120;

/** Most fields (tag included) that one frame may carry. */
export const MAX_FIELDS: i32 = 16;

/** Encoded edge characters per capture data line (an edge never straddles two lines). */
export const DATA_PAYLOAD_CHARS: i32 = 72;

/** Edge ticks are kept below 2^30 so that every intermediate of the edge codec fits an i32. */
export const MAX_EDGE_TICK: i32 = 0x3fffffff;

// Error codes carried by `ER` frames. Numbers are stable: never renumber, only append.
export const ERR_CRC: i32 = 1; // frame CRC did not match
export const ERR_SYNTAX: i32 = 2; // frame not of the form TAG fields*XXXX
export const ERR_UNKNOWN_COMMAND: i32 = 3;
export const ERR_ARGUMENT: i32 = 4; // wrong number of fields or a value out of range
export const ERR_BUSY: i32 = 5; // a measurement is running
export const ERR_CHARGE_LIMIT: i32 = 6; // charge time over the drive resistor's interlock
export const ERR_REST: i32 = 7; // minimum rest between pulses not yet elapsed
export const ERR_LINE_TOO_LONG: i32 = 8;
export const ERR_ABORTED: i32 = 9; // measurement stopped by an abort command
export const ERR_RINGING: i32 = 10; // the previous ring still produces edges; detail = ms to wait
export const ERR_CAPTURE_FAULT: i32 = 11; // capture hardware misbehaved; the switch was forced open

// Capture end reasons carried by the `CE` trailer.
export const END_QUIET: i32 = 0; // no edge for the quiet time: the ring has died out
export const END_FULL: i32 = 1; // edge limit or buffer size reached
export const END_TIMEOUT: i32 = 2; // capture window elapsed while edges were still arriving
export const END_NO_EDGES: i32 = 3; // no edge at all within the timeout

// Capture-stream entries a HAL writes in raw-timer mode (docs/porting.md, "Raw capture mode").
// Bit 31 set: overflow marker, low bits = overflows it stands for. Bit 30 set: the raw counter
// value at which the switch opened (always the first entry). Otherwise a capture:
// raw << 2 | pending << 1 | level, pending = an overflow had happened but was not yet recorded.
export const RAW_OVERFLOW_FLAG: i32 = 1 << 31; // written this way so tsc and asc agree (negative)
export const RAW_OPEN_FLAG: i32 = 0x40000000;
