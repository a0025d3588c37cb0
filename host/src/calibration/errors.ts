// Errors a user can meet while calibrating or loading a calibration profile. Each carries a
// stable code and a message that ends with what to do next.

import { CodedError } from "../coded-error.ts";

export class CalibrationError extends CodedError {}

/** Stable codes, listed once so docs and tests can refer to them. */
export const CALIBRATION_CODES = [
  "PROFILE_INVALID", // a stored profile breaks the schema (field named in the message)
  "PROFILE_VERSION", // a stored profile is of a version this build cannot read
  "PROFILE_UNREADABLE", // the file exists but cannot be read or is not JSON
  "PROFILE_WRONG_DEVICE", // the profile belongs to another tester
  "PROFILE_BOARD_MISMATCH", // the profile's tanks do not fit the tester's board-reported tanks
  "NO_PREVIOUS", // restore asked for with no previous profile kept
  "BAD_REFERENCE", // reference value or uncertainty makes no sense
  "OUT_OF_SPAN", // reference outside the usable span of the tank range
  "NONSENSE_RESULT", // a procedure produced a negative or implausible value
  "TIMEBASE_UNSUPPORTED", // the tester cannot report its tick counter
  "TWO_TANKS_UNAVAILABLE", // no second tank setting suits the part for the self-capacitance method
] as const;
