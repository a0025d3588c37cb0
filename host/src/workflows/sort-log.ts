// The append-only part log: one JSON Lines record and one CSV row per part, each written with a
// single write() on a file opened for appending and then fsync'ed, so a crash, a power cut or a
// kill loses at most the part being written. The JSON Lines log is the record and is written
// first; the CSV is its rendering (csvRow), so the two of one sort agree: opening them again cuts
// a torn last record off either file and writes into the CSV the rows of records it is missing.
// Existing logs are appended to, never rewritten; a CSV whose header differs from this version's,
// or whose rows are not the JSON Lines log's, is refused rather than mixed.

import { closeSync, existsSync, fstatSync, fsyncSync, ftruncateSync, openSync, readFileSync, readSync, writeSync } from "node:fs";
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

/** A record's CSV row; the warning codes share one cell, space-separated. */
export function csvRow(r: PartRecord): string {
  return CSV_COLUMNS.map((k) => csvField(k === "warnings" ? r.warnings.join(" ") : r[k])).join(",") + "\n";
}

/**
 * One JSON Lines record as this version holds it. Logs written before warnings became an array
 * hold them as one space-separated string ("" for none); that is read as the array it stands for.
 */
export function readPartRecord(line: string): PartRecord {
  const r = JSON.parse(line) as Omit<PartRecord, "warnings"> & { warnings: string[] | string };
  const warnings = typeof r.warnings === "string" ? r.warnings.split(" ").filter((w) => w !== "") : r.warnings;
  return { ...r, warnings };
}

/** The whole records of a sort's JSON Lines log, old and new (a torn or unreadable line is skipped). */
export function readSortLog(path: string): PartRecord[] {
  return wholeRecords(path);
}

export class SortLog {
  private constructor(private readonly csvFd: number | null, private readonly jsonlFd: number | null) {}

  /**
   * Opens (creating if needed) the logs; either path may be omitted. With both, the CSV is
   * brought level with the JSON Lines log (rows of records a kill kept from it are written now).
   */
  static open(paths: { csv?: string; jsonl?: string }): SortLog {
    const jsonlFd = paths.jsonl ? openLog(paths.jsonl) : null;
    let csvFd: number | null = null;
    try {
      if (paths.csv) {
        csvFd = openLog(paths.csv);
        const text = readFileSync(paths.csv, "utf8");
        if (text.length > 0 && text.split("\n", 1)[0] !== HEADER) {
          throw new SortLogError("LOG_HEADER_MISMATCH", `${paths.csv} has other columns than this version writes; give the logs another name`);
        }
        const expected = HEADER + "\n" + (paths.jsonl ? wholeRecords(paths.jsonl).map(csvRow).join("") : "");
        if (text.length === 0) writeDurably(csvFd, paths.jsonl ? expected : HEADER + "\n");
        else if (paths.jsonl) {
          if (!expected.startsWith(text)) {
            throw new SortLogError(
              "LOG_DISAGREE",
              `${paths.csv} holds rows that ${paths.jsonl} does not (${text.length > expected.length ? "more records" : "other records"}): the two are not one sort's logs; give the logs another name, or keep only the JSON Lines log and delete the CSV (it is written again from the JSON Lines log)`,
            );
          }
          if (text.length < expected.length) writeDurably(csvFd, expected.slice(text.length));
        }
      }
    } catch (e) {
      if (csvFd !== null) closeSync(csvFd);
      if (jsonlFd !== null) closeSync(jsonlFd);
      throw e;
    }
    return new SortLog(csvFd, jsonlFd);
  }

  append(r: PartRecord): void {
    // The record first: a kill between the two writes leaves a CSV row to be made, never a row without its record.
    if (this.jsonlFd !== null) writeDurably(this.jsonlFd, JSON.stringify(r) + "\n");
    if (this.csvFd !== null) writeDurably(this.csvFd, csvRow(r));
  }

  close(): void {
    if (this.csvFd !== null) closeSync(this.csvFd);
    if (this.jsonlFd !== null) closeSync(this.jsonlFd);
  }
}

/** The records of a JSON Lines log that parse (a line left unreadable by an older version is skipped). */
function wholeRecords(path: string): PartRecord[] {
  const out: PartRecord[] = [];
  for (const line of readFileSync(path, "utf8").split("\n")) {
    if (line.length === 0) continue;
    try {
      out.push(readPartRecord(line));
    } catch {
      // not a record
    }
  }
  return out;
}

function openLog(path: string): number {
  let fd: number;
  try {
    fd = openSync(path, "a+");
  } catch (e) {
    throw new SortLogError("LOG_UNWRITABLE", `cannot open ${path} for appending (${(e as Error).message}); check the folder exists and is writable`);
  }
  cutTornTail(fd);
  return fd;
}

/**
 * A power cut or a kill during a write can leave the last record without its newline: that part
 * was never recorded whole, so the fragment is cut off, and the next record starts on a fresh line.
 */
function cutTornTail(fd: number): void {
  const size = fstatSync(fd).size;
  if (size === 0) return;
  const chunk = Buffer.alloc(Math.min(size, 64 * 1024));
  let end = size;
  // Search backwards for the last newline, a chunk at a time.
  while (end > 0) {
    const start = Math.max(0, end - chunk.length);
    const n = readSync(fd, chunk, 0, end - start, start);
    const nl = chunk.subarray(0, n).lastIndexOf(0x0a);
    if (nl >= 0) {
      const keep = start + nl + 1;
      if (keep < size) truncateDurably(fd, keep);
      return;
    }
    end = start;
  }
  truncateDurably(fd, 0);
}

function truncateDurably(fd: number, length: number): void {
  ftruncateSync(fd, length);
  fsyncSync(fd);
}

function writeDurably(fd: number, text: string): void {
  const buf = Buffer.from(text, "utf8");
  let off = 0;
  while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
  fsyncSync(fd);
}
