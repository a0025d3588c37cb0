import { describe, expect, it } from "vitest";
import {
  AnalysisError, CalibrationError, CaptureFileError, CodedError, DeviceError, DeviceTimeoutError, MeasureError,
  PartFaultError, ProtocolError, TransportError,
} from "./index.ts";

describe("coded errors", () => {
  it("keep their own name, code and message, and are all CodedErrors", () => {
    const cases: [Error & { code: string }, string, string][] = [
      [new AnalysisError("NO_RING", "no ring"), "AnalysisError", "NO_RING"],
      [new CalibrationError("NO_PREVIOUS", "none kept"), "CalibrationError", "NO_PREVIOUS"],
      [new CaptureFileError("capture field x: bad"), "CaptureFileError", "BAD_CAPTURE_FILE"],
      [new MeasureError("NO_SETTING", "nothing fits"), "MeasureError", "NO_SETTING"],
      [new PartFaultError("PART_SHORTED", "shorted"), "PartFaultError", "PART_SHORTED"],
      [new ProtocolError("BAD_REPLY", "reply missing"), "ProtocolError", "BAD_REPLY"],
      [new TransportError("port closed", true), "TransportError", "LINK_DISCONNECTED"],
      [new TransportError("write failed", false), "TransportError", "LINK_ERROR"],
      [new DeviceTimeoutError("reply", 500), "DeviceTimeoutError", "DEVICE_TIMEOUT"],
    ];
    for (const [e, name, code] of cases) {
      expect(e).toBeInstanceOf(CodedError);
      expect(e.name).toBe(name);
      expect(e.code).toBe(code);
      expect(String(e)).toMatch(new RegExp(`^${name}: `));
    }
    expect(new PartFaultError("PART_SHORTED", "x")).toBeInstanceOf(MeasureError);
    expect(new TransportError("port closed", true).message).toMatch(/disconnected: check the cable/);
  });

  it("a tester refusal maps the device's number to a stable code", () => {
    const e = new DeviceError(1, "PU");
    expect(e).toBeInstanceOf(CodedError);
    expect(e.name).toBe("DeviceError");
    expect(e.code).toMatch(/^[A-Z_]+$/);
    expect(e.message).toMatch(/^tester refused PU: /);
  });
});
