// Errors a user can meet when talking to a tester. Each carries a stable code and a message
// that ends with what to do next.

import {
  ERR_ABORTED, ERR_ARGUMENT, ERR_BUSY, ERR_CHARGE_LIMIT, ERR_CRC, ERR_LINE_TOO_LONG, ERR_REST,
  ERR_SYNTAX, ERR_UNKNOWN_COMMAND, ERR_RINGING, ERR_CAPTURE_FAULT,
} from "@henrytick/shared-protocol";
import { CodedError } from "../coded-error.ts";
import type { ErrorCode } from "../codes.ts";

/** The tester refused a command with an `ER` frame. */
export class DeviceError extends CodedError {
  readonly deviceCode: number;
  readonly command: string;
  /** Optional numeric detail from the ER frame (REST_PENDING, RINGING: milliseconds to wait). */
  readonly detail: number | undefined;
  constructor(deviceCode: number, command: string, detail?: number) {
    const [code, text] = describeDeviceError(deviceCode);
    super(code, `tester refused ${command}: ${text}${detail !== undefined && (code === "REST_PENDING" || code === "RINGING") ? ` (${detail} ms)` : ""}`);
    this.deviceCode = deviceCode;
    this.command = command;
    this.detail = detail;
  }
}

/**
 * Whether the tester had spoken before the wait that timed out: `never` (nothing on this link since
 * it was opened), `stopped` (it answered earlier commands, not this one) or `mid-reply` (part of
 * this reply came, then nothing).
 */
export type SilenceKind = "never" | "stopped" | "mid-reply";

/**
 * No answer within the allowed time. DEVICE_TIMEOUT when nothing ever answered on this link (it
 * may not be a tester at all); DEVICE_SILENT when a tester that was talking went quiet (reset,
 * power lost, unplugged, firmware stuck, the USB link stalled).
 */
export class DeviceTimeoutError extends CodedError<"DEVICE_TIMEOUT" | "DEVICE_SILENT"> {
  readonly silence: SilenceKind;
  constructor(what: string, timeout_ms: number, silence: SilenceKind = "never") {
    super(silence === "never" ? "DEVICE_TIMEOUT" : "DEVICE_SILENT", silenceMessage(what, timeout_ms, silence));
    this.silence = silence;
  }
}

function silenceMessage(what: string, ms: number, silence: SilenceKind): string {
  if (silence === "never") {
    return `no ${what} from the tester within ${ms} ms, and nothing else since the port was opened: check that the port is a henrytick tester (henrytick ports lists the candidates) and that it is powered, then unplug and reconnect it`;
  }
  const how = silence === "mid-reply" ? `stopped answering in the middle of its ${what} (nothing for ${ms} ms)` : `answered earlier but sent no ${what} within ${ms} ms`;
  return `the tester ${how}: it may have been reset, lost power or been unplugged, or its USB link stalled; check its power and cable and measure again (the part is never pulsed twice for one reading); if it keeps happening, unplug and reconnect it and run the self-test`;
}

/**
 * The likely cause when the tester cannot read a line the host wrote: the host's lines come from
 * the codec the firmware itself uses, so bytes were added on the way.
 */
export const STRAY_CAUSE =
  "another program writing to the port (a modem manager probing new serial ports with AT commands, a terminal program left open), or noise on the line";
/** What to do about stray bytes. */
export const STRAY_NEXT =
  "close any other program that has the port open (on Linux, ModemManager can be told to leave the tester alone with a udev rule " +
  "setting ID_MM_DEVICE_IGNORE=1), then retry";
export const STRAY_BYTES = `bytes the host did not send reached it, most often from ${STRAY_CAUSE}; ${STRAY_NEXT}`;

export function describeDeviceError(n: number): [ErrorCode, string] {
  switch (n) {
    case ERR_CRC:
      return ["LINK_CRC", `the command arrived corrupted (CRC mismatch): noise on the cable, or ${STRAY_CAUSE.replace(/, or noise on the line$/, "")}; check the cable and that no other program has the port open, then retry`];
    case ERR_SYNTAX:
      return ["LINK_SYNTAX", `the tester could not read the command line: ${STRAY_BYTES}`];
    case ERR_UNKNOWN_COMMAND:
      return ["UNKNOWN_COMMAND", "the firmware does not know this command; update the firmware or the host"];
    case ERR_ARGUMENT:
      return ["BAD_ARGUMENT", "a setting is outside the tester's limits; check the device profile (henrytick profile)"];
    case ERR_BUSY:
      return ["BUSY", "a measurement is already running; wait for it or abort it"];
    case ERR_CHARGE_LIMIT:
      return ["CHARGE_LIMIT", "the charge time exceeds the drive resistor's safety interlock; use a larger drive resistor or a shorter charge"];
    case ERR_REST:
      return ["REST_PENDING", "the tester enforces a rest between pulses to protect its resistors; wait and retry"];
    case ERR_LINE_TOO_LONG:
      return ["LINE_TOO_LONG", `the tester received a line over 120 bytes, longer than any the host sends: ${STRAY_BYTES}`];
    case ERR_ABORTED:
      return ["ABORTED", "the measurement was aborted; the switch is open"];
    case ERR_RINGING:
      return ["RINGING", "the previous ring is still producing edges, so the tester will not pulse yet; wait and retry, and if it persists run the self-test"];
    case ERR_CAPTURE_FAULT:
      return ["CAPTURE_FAULT", "the tester's capture hardware misbehaved and the switch was forced open; run the self-test, and if it fails check the board and its firmware port"];
    default:
      return ["DEVICE_ERROR", `the tester reported error ${n}; see docs/protocol.md`];
  }
}
