import { mkdtempSync, readFileSync, truncateSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { csvField } from "../format/csv.ts";
import { CSV_COLUMNS, csvRow, readSortLog, SortLog } from "./sort-log.ts";
import type { PartRecord } from "./sort-session.ts";

const rec = (part: number, label = ""): PartRecord => ({
  part, time: "2026-01-01T00:00:00.000Z", lot: "A", label, inductance_h: 1e-5, inductance_u_h: 1e-7, decision: "conforming",
  p_conform: 1, lower_h: 9.5e-6, upper_h: 1.05e-5, bin: "", bin_certain: null, preferred_h: null, q: 50, esr_ohm: 0.1,
  warnings: [], drive_index: 0, tank_index: 1, charge_us: 10, tank_c_f: 1e-7, tank_calibrated: false,
});

describe("sort log", () => {
  const dir = mkdtempSync(join(tmpdir(), "henrytick-log-"));

  it("appends CSV rows and JSON lines, keeping earlier sessions", () => {
    const base = join(dir, "a");
    let log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append(rec(1));
    log.close();
    log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append(rec(1, 'odd, "quoted" label'));
    log.close();
    const csv = readFileSync(`${base}.csv`, "utf8").trimEnd().split("\n");
    expect(csv[0]).toBe(CSV_COLUMNS.join(","));
    expect(csv.length).toBe(3);
    expect(csv[2]).toContain('"odd, ""quoted"" label"');
    const lines = readFileSync(`${base}.jsonl`, "utf8").trimEnd().split("\n").map((l) => JSON.parse(l));
    expect(lines.map((l) => l.label)).toEqual(["", 'odd, "quoted" label']);
  });

  it("cuts a torn last record (power cut mid-write) off before appending, and the two logs still agree", () => {
    const base = join(dir, "torn");
    let log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append(rec(1));
    log.append(rec(2));
    log.close();
    for (const ext of ["csv", "jsonl"]) truncateSync(`${base}.${ext}`, readFileSync(`${base}.${ext}`).length - 30);
    log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append(rec(3, "after"));
    log.close();
    const lines = readFileSync(`${base}.jsonl`, "utf8").trimEnd().split("\n");
    expect(lines.map((l) => JSON.parse(l).part)).toEqual([1, 3]); // record 2 was never whole
    expect(JSON.parse(lines[1]).label).toBe("after");
    const csv = readFileSync(`${base}.csv`, "utf8");
    expect(csv).toBe(CSV_COLUMNS.join(",") + "\n" + csvRow(rec(1)) + csvRow(rec(3, "after")));
  });

  it("writes into the CSV the rows of records it is missing (a kill between the two writes)", () => {
    const base = join(dir, "behind");
    let log = SortLog.open({ jsonl: `${base}.jsonl` });
    log.append(rec(1));
    log.append(rec(2));
    log.close();
    writeFileSync(`${base}.csv`, CSV_COLUMNS.join(",") + "\n" + csvRow(rec(1)));
    log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.close();
    expect(readFileSync(`${base}.csv`, "utf8")).toBe(CSV_COLUMNS.join(",") + "\n" + csvRow(rec(1)) + csvRow(rec(2)));
  });

  it("refuses a CSV whose rows the JSON Lines log does not hold (code LOG_DISAGREE)", () => {
    const base = join(dir, "ahead");
    writeFileSync(`${base}.jsonl`, JSON.stringify(rec(1)) + "\n");
    writeFileSync(`${base}.csv`, CSV_COLUMNS.join(",") + "\n" + csvRow(rec(1)) + csvRow(rec(2)));
    expect(() => SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` })).toThrow(expect.objectContaining({ code: "LOG_DISAGREE" }));
  });

  it("refuses a CSV with other columns (code LOG_HEADER_MISMATCH)", () => {
    const p = join(dir, "other.csv");
    writeFileSync(p, "a,b\n1,2\n");
    expect(() => SortLog.open({ csv: p })).toThrow(expect.objectContaining({ code: "LOG_HEADER_MISMATCH" }));
  });

  it("refuses an unwritable place (code LOG_UNWRITABLE)", () => {
    expect(() => SortLog.open({ jsonl: join(dir, "no-such-dir", "x.jsonl") })).toThrow(expect.objectContaining({ code: "LOG_UNWRITABLE" }));
  });

  it("writes the warnings as an array in the JSON Lines log and as one space-separated cell in the CSV", () => {
    const base = join(dir, "warn");
    const log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append({ ...rec(1), warnings: ["POOR_FIT", "Q_UNCERTAIN"] });
    log.close();
    expect(JSON.parse(readFileSync(`${base}.jsonl`, "utf8")).warnings).toEqual(["POOR_FIT", "Q_UNCERTAIN"]);
    const row = readFileSync(`${base}.csv`, "utf8").trimEnd().split("\n")[1].split(",");
    expect(row[CSV_COLUMNS.indexOf("warnings")]).toBe("POOR_FIT Q_UNCERTAIN");
  });

  it("reads a log written with warnings as one string, and appends to it with the CSV still agreeing", () => {
    const base = join(dir, "old");
    const old = (part: number, warnings: string) => JSON.stringify({ ...rec(part), warnings });
    // The earlier form: the codes space-separated in one string, "" for none; its CSV row is the same cell.
    writeFileSync(`${base}.jsonl`, old(1, "") + "\n" + old(2, "POOR_FIT Q_UNCERTAIN") + "\n");
    const oldCsv = CSV_COLUMNS.join(",") + "\n" + csvRow(rec(1)) + csvRow({ ...rec(2), warnings: ["POOR_FIT", "Q_UNCERTAIN"] });
    writeFileSync(`${base}.csv`, oldCsv);
    expect(readSortLog(`${base}.jsonl`).map((r) => r.warnings)).toEqual([[], ["POOR_FIT", "Q_UNCERTAIN"]]);
    const log = SortLog.open({ csv: `${base}.csv`, jsonl: `${base}.jsonl` });
    log.append({ ...rec(3), warnings: ["POOR_FIT"] });
    log.close();
    expect(readSortLog(`${base}.jsonl`).map((r) => r.warnings)).toEqual([[], ["POOR_FIT", "Q_UNCERTAIN"], ["POOR_FIT"]]);
    expect(readFileSync(`${base}.csv`, "utf8")).toBe(oldCsv + csvRow({ ...rec(3), warnings: ["POOR_FIT"] }));
  });

  it("quotes CSV fields per RFC 4180", () => {
    expect(csvField("a,b")).toBe('"a,b"');
    expect(csvField(null)).toBe("");
    expect(csvField(1.5)).toBe("1.5");
  });
});
