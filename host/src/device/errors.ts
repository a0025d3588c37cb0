// Errors a user can meet when talking to a tester. Each carries a stable code and a message
// that ends with what to do next.

import {
  ERR_ABORTED, ERR_ARGUMENT, ERR_BUSY, ERR_CHARGE_LIMIT, ERR_CRC, ERR_LINE_TOO_LONG, ERR_REST,
  ERR_SYNTAX, ERR_UNKNOWN_COMMAND, ERR_RINGING, ERR_CAPTURE_FAULT,
} from "@henrytick/shared-protocol";
import { CodedError } from "../coded-error.ts";

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

/** No answer within the allowed time. */
export class DeviceTimeoutError extends CodedError<"DEVICE_TIMEOUT"> {
  constructor(what: string, timeout_ms: number) {
    super("DEVICE_TIMEOUT", `no ${what} from the tester within ${timeout_ms} ms; check that the port is a henrytick tester, then unplug and reconnect it`);
  }
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

export function describeDeviceError(n: number): [string, string] {
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
