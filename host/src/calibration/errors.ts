// Errors a user can meet while calibrating or loading a calibration profile. Each carries a
// stable code and a message that ends with what to do next.

import { CodedError } from "../coded-error.ts";
import { CALIBRATION_ERROR_MEANINGS, type CalibrationErrorCode } from "../codes.ts";

export class CalibrationError extends CodedError<CalibrationErrorCode> {}

/** Stable codes (codes.ts lists them with their meanings; docs/codes.md is the table). */
export const CALIBRATION_CODES = Object.keys(CALIBRATION_ERROR_MEANINGS) as CalibrationErrorCode[];
