// Transport over a serial port (USB CDC on hardware, or a pseudo-terminal in front of a
// simulated tester) through the node-serialport stack.

import { autoDetect } from "@serialport/bindings-cpp";
import { ReadlineParser } from "@serialport/parser-readline";
import { SerialPortStream } from "@serialport/stream";
import type { Transport } from "./transport.ts";
import { CodedError } from "../coded-error.ts";
import { TransportBase, TransportError } from "./transport.ts";

export interface SerialOptions {
  path: string;
  /** Ignored by USB CDC devices, used by UART bridges. Default 115200. */
  baudRate?: number;
}

export class SerialTransport extends TransportBase implements Transport {
  readonly description: string;
  private port: SerialPortStream;
  private closing = false;

  private constructor(port: SerialPortStream, path: string) {
    super();
    this.port = port;
    this.description = `serial ${path}`;
    const parser = port.pipe(new ReadlineParser({ delimiter: "\n", encoding: "latin1" }));
    parser.on("data", (line: string) => this.lineHandler(line));
    port.on("close", (err: Error & { disconnected?: boolean } | null) => {
      if (this.closing) return this.closeHandler(null);
      this.closeHandler(new TransportError(`${this.description} closed: ${err?.message ?? "port closed"}`, true));
    });
    port.on("error", (err: Error) => {
      this.closeHandler(new TransportError(`${this.description}: ${err.message}`, false));
    });
  }

  /** Opens the port; rejects with a TransportError that names the path and a next step. */
  static open(opts: SerialOptions): Promise<SerialTransport> {
    if (typeof opts.path !== "string" || opts.path.length === 0) {
      throw new TypeError('"path" must be a non-empty serial device path');
    }
    return new Promise((resolve, reject) => {
      const port = new SerialPortStream({
        binding: autoDetect(),
        path: opts.path,
        baudRate: opts.baudRate ?? 115200,
        autoOpen: false,
      });
      port.open((err) => {
        if (err) {
          reject(openError(opts.path, err));
          return;
        }
        resolve(new SerialTransport(port, opts.path));
      });
    });
  }

  write(data: Uint8Array): Promise<void> {
    return new Promise((resolve, reject) => {
      this.port.write(Buffer.from(data), (err) => {
        if (err) reject(new TransportError(`${this.description}: write failed: ${err.message}`, true));
        else resolve();
      });
    });
  }

  close(): Promise<void> {
    if (!this.port.isOpen) return Promise.resolve();
    this.closing = true;
    return new Promise((resolve) => this.port.close(() => resolve()));
  }
}

/**
 * Another program holds the port: node-serialport's exclusive lock failed (Linux, macOS: "Cannot
 * lock port"), the port is busy, or Windows refused a port that is open elsewhere.
 */
const IN_USE = /Cannot lock port|Resource busy|EBUSY|Access denied/i;

function openError(path: string, err: Error): TransportError {
  const reason = err.message.replace(/^Error:?\s*/, "");
  if (IN_USE.test(err.message)) {
    return new TransportError(
      `${path} is in use by another program (${reason}): another henrytick command or bench application, a terminal program, or a modem manager probing the port. ` +
        `Close it and try again; on Linux and macOS, "lsof ${path}" or "fuser ${path}" names the process that holds it`,
      false,
      "PORT_IN_USE",
    );
  }
  return new TransportError(`cannot open ${path}: ${reason} (check the path, that the tester is plugged in, and that you may access the port)`, false);
}

export interface SerialPortInfo {
  path: string;
  manufacturer?: string;
  serialNumber?: string;
  vendorId?: string;
  productId?: string;
}

/**
 * The serial ports this computer offers. PORTS_UNAVAILABLE when the system cannot list them
 * (listing needs the device database, udev on Linux, which containers often lack).
 */
export async function listSerialPorts(): Promise<SerialPortInfo[]> {
  try {
    return await autoDetect().list();
  } catch (e) {
    throw new CodedError(
      "PORTS_UNAVAILABLE",
      `this system cannot list serial ports (${(e as Error).message.split("\n")[0]}); ` +
        "give the port's path directly, e.g. /dev/ttyACM0 (Linux), /dev/cu.usbmodem1101 (macOS) or COM3 (Windows); " +
        "on Linux, ls /dev/ttyACM* /dev/ttyUSB* shows the candidates",
    );
  }
}
