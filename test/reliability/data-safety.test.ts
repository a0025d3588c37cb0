// Data safety: a child process writes capture files (writeCaptureFile), calibration profiles
// (saveProfile) and sort-log records (SortLog) in a loop and is killed (SIGKILL) at seeded random
// moments, then restarted on the same folder. After every kill, every file must read back whole
// and hold exactly a record the child wrote; the logs may lose at most the record in flight.
// (A kill cannot tear a single write() to a regular file; a power cut can, see the last test.)

import { existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, truncateSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, describe, expect, it } from "vitest";
import { runAndKill } from "./data-safety/run-and-kill.ts";
import { readCaptureFile } from "../../host/src/capture/capture-file.ts";
import { loadProfile, profilePaths, readProfileFile } from "../../host/src/calibration/profile-store.ts";
import { Random } from "../../host/src/sim/random.ts";
import { CSV_COLUMNS, csvRow, SortLog } from "../../host/src/workflows/sort-log.ts";
import { CAPTURE_SLOTS, captureFor, DEVICE_ID, partRecordFor, profileFor } from "./data-safety/records.ts";

const WRITER = fileURLToPath(new URL("./data-safety/writer.ts", import.meta.url));
const dirs: string[] = [];
afterAll(() => dirs.forEach((d) => rmSync(d, { recursive: true, force: true })));

function freshDir(): string {
  const d = mkdtempSync(join(tmpdir(), "henrytick-kill-"));
  dirs.push(d);
  return d;
}

/** Whole lines of a log, and whether a partial line trails them. */
function logLines(path: string): { lines: string[]; tornTail: boolean } {
  if (!existsSync(path)) return { lines: [], tornTail: false };
  const parts = readFileSync(path, "utf8").split("\n");
  const tail = parts.pop()!;
  return { lines: parts, tornTail: tail.length > 0 };
}

/** Checks every file in the folder; returns the last whole part number in the JSON Lines log. */
function verify(dir: string): number {
  for (let j = 0; j < CAPTURE_SLOTS; j++) {
    const path = join(dir, `capture-${j}.json`);
    if (!existsSync(path)) continue;
    const c = readCaptureFile(path); // throws on a half-written file
    const k = Number(/^record (\d+)$/.exec(String(c.meta?.label))?.[1]);
    expect(k % CAPTURE_SLOTS).toBe(j);
    expect(c.edges).toEqual(captureFor(k).edges);
  }
  const paths = profilePaths(DEVICE_ID, { dir });
  expect(existsSync(paths.rejected)).toBe(false); // a current profile was never found damaged
  const current = loadProfile(DEVICE_ID, { dir });
  if (current) {
    const k = Number(/^record (\d+)$/.exec(current.tanks[0].detail)?.[1]);
    expect(current).toEqual(profileFor(k));
  }
  if (existsSync(paths.previous)) expect(readProfileFile(paths.previous)).not.toBeNull();

  const csv = logLines(join(dir, "parts.csv"));
  const jsonl = logLines(join(dir, "parts.jsonl"));
  expect(csv.tornTail).toBe(false);
  expect(jsonl.tornTail).toBe(false);
  if (csv.lines.length > 0) expect(csv.lines[0]).toBe(CSV_COLUMNS.join(","));
  const check = (lines: string[], parse: (l: string) => number, render: (k: number) => string) => {
    let prev = 0;
    for (const line of lines) {
      const k = parse(line);
      expect(line).toBe(render(k));
      // Consecutive, except that the record in flight at a kill may be written again on restart.
      expect(k === prev + 1 || k === prev).toBe(true);
      prev = k;
    }
    return prev;
  };
  check(csv.lines.slice(1), (l) => Number(l.split(",")[0]), (k) => csvRow(partRecordFor(k)).slice(0, -1));
  return check(jsonl.lines, (l) => (JSON.parse(l) as { part: number }).part, (k) => JSON.stringify(partRecordFor(k)));
}

describe("killing the writer at random moments", () => {
  it("never leaves a damaged capture file, profile or log record; loses at most the record in flight", async () => {
    const dir = freshDir();
    const rng = new Random(4242);
    let last = 0;
    for (let round = 0; round < 12; round++) {
      await runAndKill(WRITER, dir, Math.floor(rng.uniform() * 250));
      const now = verify(dir);
      expect(now).toBeGreaterThanOrEqual(last); // nothing written earlier went missing
      last = now;
    }
    expect(last).toBeGreaterThan(0);
    // Left-over temporary files are allowed (a kill between write and rename), never at the real names.
    const names = readdirSync(dir).filter((n) => !n.endsWith(".tmp"));
    expect(names.every((n) => /^(capture-\d\.json|parts\.(csv|jsonl)|calibration-HT-KILLTEST(\.previous)?\.json)$/.test(n))).toBe(true);
  }, 300_000);
});

describe("a log whose last record was torn (power cut mid-write)", () => {
  // A power cut can leave part of a record without its newline; the next session must not glue
  // its first record onto it (SortLog.open ends a torn last record before appending).
  it("the next session's first record is still whole", () => {
    const dir = freshDir();
    const jsonl = join(dir, "parts.jsonl");
    const log = SortLog.open({ jsonl });
    log.append(partRecordFor(1));
    log.append(partRecordFor(2));
    log.close();
    truncateSync(jsonl, readFileSync(jsonl).length - 40); // record 2 torn
    const next = SortLog.open({ jsonl });
    next.append(partRecordFor(3));
    next.close();
    const lines = readFileSync(jsonl, "utf8").split("\n").filter((l) => l.length > 0);
    expect(lines[0]).toBe(JSON.stringify(partRecordFor(1)));
    expect(lines).toContain(JSON.stringify(partRecordFor(3)));
  });
});
