// Reassembles one capture stream (CH header, CD data lines, CE trailer) and proves it whole:
// consecutive sequence numbers, the header's count, the trailer's count and the checksum of the
// decoded edges must all agree. Anything else is a StreamDefect, and the client fetches the
// capture again.

import { END_FULL, END_NO_EDGES, END_QUIET, END_TIMEOUT, EdgeDecoder, PROTOCOL_VERSION } from "@henrytick/shared-protocol";
import type { MeasureSettings } from "./client.ts";
import type { Frame } from "./frames.ts";
import { EdgeList } from "../capture/edge-list.ts";

export type EndReason = "quiet" | "full" | "timeout" | "no-edges";

export interface RawCapture {
  settings: MeasureSettings;
  tick_hz: number;
  /**
   * The edges as decoded (the decoder's arrays): the capture record, its checks and the analysis
   * share them. Present on a capture as the client returns it; a copy made by spreading it
   * (`{ ...raw, ticks }`) has none, and its ticks and levels are used instead.
   */
  readonly edges?: EdgeList;
  /** The same edges as plain arrays (made on first use when `edges` is there). */
  ticks: number[];
  levels: number[];
  end_reason: EndReason;
}

export class StreamDefect extends Error {
  constructor(message: string) {
    super(message);
    this.name = "StreamDefect";
  }
}

const END_REASONS: Record<number, EndReason> = {
  [END_QUIET]: "quiet",
  [END_FULL]: "full",
  [END_TIMEOUT]: "timeout",
  [END_NO_EDGES]: "no-edges",
};

const encoder = new TextEncoder();

export class CaptureStreamReader {
  private expectSeq = 0;
  private expected = -1;
  private tick_hz = 0;
  private decoder = new EdgeDecoder();
  private ticks = new Int32Array(0);
  private levels = new Uint8Array(0);

  /** With a token, frames before the header that carries it belong to an earlier request. */
  constructor(private readonly settings: MeasureSettings, private readonly token?: number) {}

  /** Takes the next frame; returns the capture once the trailer has verified it. */
  accept(f: Frame): RawCapture | null {
    if (this.token !== undefined && this.expected < 0 && !(f.tag === "CH" && f.fields[7] === String(this.token))) {
      return null; // a stale stream's line, or an OK of a stale request: not ours, skipped
    }
    if (f.tag !== "CH" && f.tag !== "CD" && f.tag !== "CE") throw new StreamDefect(`unexpected ${f.tag} frame in a capture`);
    const seq = this.int(f, 0, "seq");
    if (seq !== this.expectSeq) throw new StreamDefect(`sequence ${seq} where ${this.expectSeq} was due (line lost or repeated)`);
    this.expectSeq++;
    if (f.tag === "CH") return this.header(f);
    if (this.expected < 0) throw new StreamDefect("capture data before its header");
    if (f.tag === "CD") {
      const payload = encoder.encode(f.fields[1] ?? "");
      if (f.fields.length !== 2 || this.decoder.decode(payload, 0, payload.length, this.ticks, this.levels) < 0) {
        throw new StreamDefect(`undecodable edge data in line ${seq}`);
      }
      return null;
    }
    return this.trailer(f);
  }

  private header(f: Frame): null {
    if (this.expected >= 0) throw new StreamDefect("second capture header");
    const proto = this.int(f, 1, "protocol");
    if (proto !== PROTOCOL_VERSION) throw new StreamDefect(`capture in protocol v${proto}`);
    this.tick_hz = this.int(f, 2, "tick_hz");
    const s = this.settings;
    const echoed = [this.int(f, 3, "drive"), this.int(f, 4, "tank"), this.int(f, 5, "charge_us")];
    if (echoed[0] !== s.drive || echoed[1] !== s.tank || echoed[2] !== s.charge_us) {
      throw new StreamDefect(`capture header settings ${echoed.join("/")} do not match the request`);
    }
    this.expected = this.int(f, 6, "edges");
    if (this.expected < 0 || this.expected > s.edge_limit) throw new StreamDefect(`capture header claims ${this.expected} edges`);
    this.ticks = new Int32Array(this.expected);
    this.levels = new Uint8Array(this.expected);
    return null;
  }

  private trailer(f: Frame): RawCapture {
    const count = this.int(f, 1, "edges");
    const sum = parseInt(f.fields[2] ?? "", 16);
    const reason = END_REASONS[this.int(f, 3, "end_reason")];
    if (count !== this.expected || this.decoder.count !== count) {
      throw new StreamDefect(`edge count mismatch: header ${this.expected}, trailer ${count}, received ${this.decoder.count}`);
    }
    if (!/^[0-9A-F]{4}$/.test(f.fields[2] ?? "") || sum !== this.decoder.checksum) {
      throw new StreamDefect("edge checksum mismatch");
    }
    if (!reason) throw new StreamDefect(`unknown end reason ${f.fields[3]}`);
    const edges = new EdgeList(this.ticks, this.levels);
    let plain: { ticks: number[]; levels: number[] } | null = null;
    const asArrays = () => (plain ??= { ticks: Array.from(edges.ticks), levels: Array.from(edges.levels) });
    const raw: RawCapture = {
      settings: this.settings,
      tick_hz: this.tick_hz,
      get ticks() {
        return asArrays().ticks;
      },
      get levels() {
        return asArrays().levels;
      },
      end_reason: reason,
    };
    // Not enumerable, so a copy with other ticks or levels ({ ...raw, ticks }) does not carry it.
    Object.defineProperty(raw, "edges", { value: edges, enumerable: false });
    return raw;
  }

  private int(f: Frame, i: number, name: string): number {
    const s = f.fields[i];
    if (s === undefined || !/^-?\d{1,10}$/.test(s)) throw new StreamDefect(`${f.tag} field ${name} malformed`);
    return Number(s);
  }
}
