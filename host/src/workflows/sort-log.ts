// The append-only part log: one CSV row and one JSON Lines record per part, each written with a
// single write() on a file opened for appending and then fsync'ed, so a crash, a power cut or a
// kill loses at most the part being written. Existing logs are appended to, never rewritten; a
// CSV whose header differs from this version's is refused rather than mixed.

import { closeSync, existsSync, fstatSync, fsyncSync, openSync, readFileSync, readSync, writeSync } from "node:fs";
import type { PartRecord } from "./sort-session.ts";
import { CodedError } from "../coded-error.ts";
import { csvField } from "../format/csv.ts";

export const CSV_COLUMNS: readonly (keyof PartRecord)[] = [
  "part", "time", "lot", "label", "inductance_h", "inductance_u_h", "decision", "p_conform", "lower_h", "upper_h",
  "bin", "bin_certain", "preferred_h", "q", "esr_ohm", "warnings", "drive_index", "tank_index", "charge_us",
  "tank_c_f", "tank_calibrated",
];
const HEADER = CSV_COLUMNS.join(",");

export class SortLogError extends CodedError {}

export function csvRow(r: PartRecord): string {
  return CSV_COLUMNS.map((k) => csvField(r[k])).join(",") + "\n";
}

export class SortLog {
  private constructor(private readonly csvFd: number | null, private readonly jsonlFd: number | null) {}

  /** Opens (creating if needed) the logs; either path may be omitted. */
  static open(paths: { csv?: string; jsonl?: string }): SortLog {
    let csvFd: number | null = null;
    if (paths.csv) {
      const fresh = !existsSync(paths.csv) || readFileSync(paths.csv, "utf8").length === 0;
      if (!fresh) {
        const first = readFileSync(paths.csv, "utf8").split("\n", 1)[0];
        if (first !== HEADER) {
          throw new SortLogError("LOG_HEADER_MISMATCH", `${paths.csv} has other columns than this version writes; give a new --log file name`);
        }
      }
      csvFd = openLog(paths.csv);
      if (fresh) writeDurably(csvFd, HEADER + "\n");
    }
    const jsonlFd = paths.jsonl ? openLog(paths.jsonl) : null;
    return new SortLog(csvFd, jsonlFd);
  }

  append(r: PartRecord): void {
    if (this.csvFd !== null) writeDurably(this.csvFd, csvRow(r));
    if (this.jsonlFd !== null) writeDurably(this.jsonlFd, JSON.stringify(r) + "\n");
  }

  close(): void {
    if (this.csvFd !== null) closeSync(this.csvFd);
    if (this.jsonlFd !== null) closeSync(this.jsonlFd);
  }
}

function openLog(path: string): number {
  let fd: number;
  try {
    fd = openSync(path, "a+");
  } catch (e) {
    throw new SortLogError("LOG_UNWRITABLE", `cannot open ${path} for appending (${(e as Error).message}); check the folder exists and is writable`);
  }
  closeTornTail(fd);
  return fd;
}

/**
 * A power cut during a write can leave the last record without its newline. End that fragment
 * first, so it stays one unreadable line instead of swallowing the next session's first record.
 */
function closeTornTail(fd: number): void {
  const size = fstatSync(fd).size;
  if (size === 0) return;
  const last = Buffer.alloc(1);
  readSync(fd, last, 0, 1, size - 1);
  if (last[0] !== 0x0a) writeDurably(fd, "\n");
}

function writeDurably(fd: number, text: string): void {
  const buf = Buffer.from(text, "utf8");
  let off = 0;
  while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
  fsyncSync(fd);
}
