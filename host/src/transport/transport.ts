// The link to a tester: bytes out, complete lines in. Implementations: a serial port (real
// hardware or a pseudo-terminal) and the in-process simulated tester. The device client is
// written against this interface only.

import { CodedError } from "../coded-error.ts";

export interface Transport {
  /** Human-readable name of the link, for messages ("serial /dev/ttyACM0", "simulated tester"). */
  readonly description: string;
  /** Sends bytes (whole frames, newline included). Rejects if the link is gone. */
  write(data: Uint8Array): Promise<void>;
  /** Receives every complete line (newline removed) in order. Replaces any previous handler. */
  onLine(handler: (line: string) => void): void;
  /** Called once if the link fails or closes underneath us (unplugged, port error). */
  onClose(handler: (error: TransportError | null) => void): void;
  close(): Promise<void>;
}

/** The receiving side every transport shares: where complete lines and the close are delivered. */
export abstract class TransportBase {
  protected lineHandler: (line: string) => void = () => {};
  protected closeHandler: (error: TransportError | null) => void = () => {};

  onLine(handler: (line: string) => void): void {
    this.lineHandler = handler;
  }

  onClose(handler: (error: TransportError | null) => void): void {
    this.closeHandler = handler;
  }
}

/** A failure of the link itself. `disconnected` is true when the device went away. */
/** Code LINK_DISCONNECTED when the device went away (unplugged, port closed), else LINK_ERROR. */
/** PORT_IN_USE when another program holds the port. */
export class TransportError extends CodedError<"LINK_DISCONNECTED" | "LINK_ERROR" | "PORT_IN_USE"> {
  constructor(
    message: string,
    readonly disconnected: boolean,
    code?: "PORT_IN_USE",
  ) {
    super(
      code ?? (disconnected ? "LINK_DISCONNECTED" : "LINK_ERROR"),
      disconnected ? `${message} (the tester was disconnected: check the cable and reconnect)` : message,
    );
  }
}

/** Splits a byte stream into lines; shared by transports that receive raw bytes. */
export class LineSplitter {
  private pending = "";
  private readonly decoder = new TextDecoder("latin1");
  constructor(private readonly emit: (line: string) => void) {}

  push(bytes: Uint8Array): void {
    this.pushText(this.decoder.decode(bytes, { stream: true }));
  }

  /** The same for text already decoded (one character per byte). */
  pushText(text: string): void {
    this.pending += text;
    let nl = this.pending.indexOf("\n");
    while (nl >= 0) {
      const line = this.pending.slice(0, nl);
      this.pending = this.pending.slice(nl + 1);
      this.emit(line);
      nl = this.pending.indexOf("\n");
    }
  }
}
