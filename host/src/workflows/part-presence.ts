// Telling when a part goes onto the clips and comes off them, from the ring alone: open clips
// give no ring, a part gives one. A part is recorded once it has given `settle` consecutive
// readings that agree within their uncertainties (a part being pushed into the clips reads
// erratically for a moment); it is then ignored until the clips read open `clear` times in a
// row. Pure state machine: the caller measures and feeds the outcome in.

export type Observation =
  | { kind: "ring"; inductance_h: number; inductance_u_h: number }
  | { kind: "open" }
  /** A part is there but gives no usable reading (too few edges, no safe setting, ...). */
  | { kind: "unreadable"; code: string };

export type PresenceAction =
  | "wait-part" // clips open, nothing to do
  | "settling" // a part is on the clips; another reading is needed before it is recorded
  | "record" // record this reading
  | "wait-removal" // the part on the clips has been recorded (or cannot be read)
  | "removed"; // the clips just went open after a part

export interface PresenceOptions {
  /** Agreeing readings needed before a part is recorded; default 2. */
  settle?: number;
  /** Open readings in a row that mean the part is gone; default 1. */
  clear?: number;
}

export class PresenceTracker {
  private readonly settle: number;
  private readonly clear: number;
  private state: "empty" | "settling" | "done" = "empty";
  private last: { l: number; u: number } | null = null;
  private agreeing = 0;
  private opens = 0;

  constructor(opts: PresenceOptions = {}) {
    this.settle = Math.max(1, Math.floor(opts.settle ?? 2));
    this.clear = Math.max(1, Math.floor(opts.clear ?? 1));
  }

  observe(o: Observation): PresenceAction {
    if (o.kind === "open") {
      this.last = null;
      this.agreeing = 0;
      if (this.state === "empty") return "wait-part";
      if (++this.opens < this.clear) return this.state === "done" ? "wait-removal" : "settling";
      this.state = "empty";
      this.opens = 0;
      return "removed";
    }
    this.opens = 0;
    if (this.state === "done") return "wait-removal";
    if (o.kind === "unreadable") {
      this.state = "done";
      return "wait-removal";
    }
    this.state = "settling";
    const agrees = this.last !== null && Math.abs(o.inductance_h - this.last.l) <= Math.hypot(o.inductance_u_h, this.last.u);
    this.agreeing = agrees ? this.agreeing + 1 : 1;
    this.last = { l: o.inductance_h, u: o.inductance_u_h };
    if (this.agreeing >= this.settle) {
      this.state = "done";
      return "record";
    }
    return "settling";
  }
}
