// The hardware abstraction layer: the only functions the firmware imports (wasm module "hal").
//
// A port implements these on a board (or in the simulated tester) and in return calls the
// firmware exports: fw_init() once after reset, fw_rx(byte) for every received byte, and
// fw_poll() from its main loop. fw_poll returns how many timer ticks may pass before it wants to
// be called again (0: only after the next received byte). No HAL function is called from an
// interrupt by the firmware, and none may call back into the firmware.
//
// Time is the capture timer's free-running tick counter at the profile's tick rate. The firmware
// only ever subtracts two readings, so a 32-bit counter that wraps is fine.
//
// Every function's full contract (units, must / must not / may) is in docs/porting.md.

/** Free-running timer, low 32 bits, in ticks. Must be monotonic modulo 2^32. */
@external("hal", "now")
export declare function halNow(): i32;

/**
 * Connects drive resistor `drive` and tank capacitor `tank` (indices into the board profile).
 * Called only while the switch is open. The firmware waits the profile's settle time afterwards.
 */
@external("hal", "select")
export declare function halSelect(drive: i32, tank: i32): void;

/**
 * Closes the low-side switch now and opens it exactly `chargeTicks` later by hardware timer
 * compare (not by software), then captures comparator edges into `buf` (an i32 array of
 * `capacity` entries in firmware memory), one entry each, in the format capture_bits() names.
 * `chargeTicks` 0: do not touch the switch, only arm the capture (listening with the switch
 * open). Must return at once; capture proceeds by DMA or interrupt. Replaces any capture before.
 */
@external("hal", "pulse")
export declare function halPulse(chargeTicks: i32, buf: usize, capacity: i32): void;

/** Number of entries the capture has written into the buffer so far (never more than capacity). */
@external("hal", "capture_count")
export declare function halCaptureCount(): i32;

/** Forces the switch open and stops the capture. Must be safe to call at any time, repeatedly. */
@external("hal", "stop")
export declare function halStop(): void;

/** Queues `len` bytes at `ptr` for the host link. May block until they are queued; must not drop. */
@external("hal", "uart_write")
export declare function halUartWrite(ptr: usize, len: i32): void;

/** A 32-bit identifier unique to this board (from the MCU's unique id or a programmed serial). */
@external("hal", "device_id")
export declare function halDeviceId(): i32;

/**
 * The capture entry format, constant for the life of the firmware. 0: extended mode, each entry
 * is (ticks since the switch opened) << 1 | level, ticks below 2^29 (bits 31 and 30 of an entry
 * are read as raw-mode flags). 8..24: raw mode with an N-bit timer, entries as in
 * timer-extend.ts (open entry, overflow markers, captures).
 */
@external("hal", "capture_bits")
export declare function halCaptureBits(): i32;
