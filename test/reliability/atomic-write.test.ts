// The one atomic-write helper (host/src/fs/atomic-write.ts) and the writers that use it (capture
// files, reports, calibration profiles): a symlink planted at the old predictable temporary name
// or at a guessed one is never followed, a failure mid-write (an iterator that throws; a real
// EFBIG from a file-size limit) leaves the target as it was and no temporary file behind.

import { spawnSync } from "node:child_process";
import { existsSync, lstatSync, lutimesSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, utimesSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, describe, expect, it } from "vitest";
import { readCaptureFile, writeCaptureFile } from "../../host/src/capture/capture-file.ts";
import { profilePaths, saveProfile } from "../../host/src/calibration/profile-store.ts";
import { FileWriteError, STALE_TEMP_MS, tempNameFor, writeFileAtomic } from "../../host/src/fs/atomic-write.ts";
import { writeReport } from "../../host/src/report/write-report.ts";
import { captureFor, DEVICE_ID, profileFor } from "./data-safety/records.ts";

const CHILD = fileURLToPath(new URL("./atomic/write-child.ts", import.meta.url));
const REPO = fileURLToPath(new URL("../..", import.meta.url));
const dirs: string[] = [];
afterAll(() => dirs.forEach((d) => rmSync(d, { recursive: true, force: true })));
function freshDir(): string {
  const d = mkdtempSync(join(tmpdir(), "henrytick-atomic-"));
  dirs.push(d);
  return d;
}
const VICTIM_TEXT = "victim: must never change\n";
function victim(dir: string): string {
  const v = join(dir, "victim.txt");
  writeFileSync(v, VICTIM_TEXT);
  return v;
}
const tmpLeft = (dir: string) => readdirSync(dir).filter((n) => n.endsWith(".tmp") && !lstatSync(join(dir, n)).isSymbolicLink());

describe("writeFileAtomic", () => {
  it("replaces the file whole, in the target's folder, under a hidden random name, leaving nothing behind", () => {
    const dir = freshDir();
    const f = join(dir, "a.json");
    writeFileAtomic(f, "one");
    writeFileAtomic(f, ["t", Buffer.from("wo")]);
    expect(readFileSync(f, "utf8")).toBe("two");
    expect(readdirSync(dir)).toEqual(["a.json"]);
    const a = tempNameFor(f), b = tempNameFor(f);
    expect(a).toMatch(/^\.a\.json\.[0-9a-f]{24}\.tmp$/);
    expect(a).not.toBe(b);
  });

  it("never follows a symlink planted at the name it picks: skips to a fresh name", () => {
    const dir = freshDir();
    const v = victim(dir);
    const f = join(dir, "a.json");
    const names = ["guess-0.tmp", "guess-1.tmp", "guess-2.tmp"];
    symlinkSync(v, join(dir, names[0]));
    symlinkSync(join(dir, "nowhere"), join(dir, names[1])); // dangling: O_CREAT alone would create its target
    writeFileAtomic(f, "new", { tempName: (k) => names[k] });
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
    expect(existsSync(join(dir, "nowhere"))).toBe(false);
    expect(readFileSync(f, "utf8")).toBe("new");
    expect(tmpLeft(dir)).toEqual([]);
  });

  it("gives up with a coded error when every name it tries is taken; the target is untouched", () => {
    const dir = freshDir();
    const v = victim(dir);
    const f = join(dir, "a.json");
    writeFileSync(f, "old");
    symlinkSync(v, join(dir, "taken.tmp"));
    let err: unknown;
    try {
      writeFileAtomic(f, "new", { tempName: () => "taken.tmp" });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(FileWriteError);
    expect(err).toMatchObject({ code: "WRITE_FAILED" });
    expect(readFileSync(f, "utf8")).toBe("old");
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
  });

  it("a failure mid-write keeps the old file and removes the temporary one", () => {
    const dir = freshDir();
    const f = join(dir, "a.json");
    writeFileSync(f, "old");
    function* failing(): Generator<string> {
      yield "half of the new";
      throw new Error("source failed");
    }
    expect(() => writeFileAtomic(f, failing())).toThrow("source failed");
    expect(readFileSync(f, "utf8")).toBe("old");
    expect(readdirSync(dir)).toEqual(["a.json"]);
  });

  it("a real write error (EFBIG under a 64 KiB file-size limit) is DISK_FULL, keeps the old file and leaves no temporary file", () => {
    const dir = freshDir();
    const f = join(dir, "big.bin");
    writeFileSync(f, "old");
    // SIGXFSZ ignored, so the kernel fails the write with EFBIG instead of killing the process.
    const r = spawnSync("bash", ["-c", `trap '' XFSZ; ulimit -f 64; exec "${process.execPath}" --import tsx "${CHILD}" "${f}" 1000000`], { cwd: REPO, encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout.trim());
    expect(out).toMatchObject({ ok: false, code: "DISK_FULL" });
    expect(out.message).toMatch(/free some space/);
    expect(readFileSync(f, "utf8")).toBe("old");
    expect(readdirSync(dir)).toEqual(["big.bin"]);
  });

  it("a missing folder is NO_SUCH_FOLDER with the folder named", () => {
    const dir = freshDir();
    expect(() => writeFileAtomic(join(dir, "none", "a.json"), "x")).toThrow(expect.objectContaining({ code: "NO_SUCH_FOLDER" }));
  });
});

describe("temporary files a killed writer left", () => {
  it("are removed by the next write of the same target once an hour old; fresh ones, other names and symlink targets stay", () => {
    const dir = freshDir();
    const v = victim(dir);
    const f = join(dir, "a.json");
    const old = join(dir, tempNameFor(f));
    const fresh = join(dir, tempNameFor(f));
    const link = join(dir, tempNameFor(f));
    const other = join(dir, tempNameFor(join(dir, "b.json")));
    for (const p of [old, fresh, other]) writeFileSync(p, "left by a kill");
    symlinkSync(v, link);
    const hourAgo = new Date(Date.now() - STALE_TEMP_MS - 60_000);
    utimesSync(old, hourAgo, hourAgo);
    utimesSync(other, hourAgo, hourAgo);
    lutimesSync(link, hourAgo, hourAgo);
    writeFileAtomic(f, "new");
    expect(existsSync(old)).toBe(false);
    expect(existsSync(fresh)).toBe(true);
    expect(existsSync(other)).toBe(true);
    expect(lstatExists(link)).toBe(false);
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
  });
});

function lstatExists(p: string): boolean {
  try {
    lstatSync(p);
    return true;
  } catch {
    return false;
  }
}

describe("writers use it: a symlink at the old predictable temporary name is not followed", () => {
  it("writeCaptureFile (was FILE.<pid>.tmp)", () => {
    const dir = freshDir();
    const v = victim(dir);
    const f = join(dir, "c.json");
    symlinkSync(v, `${f}.${process.pid}.tmp`);
    writeCaptureFile(f, captureFor(1));
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
    expect(readCaptureFile(f)).toEqual(captureFor(1));
  });

  it("writeReport (was OUT.<pid>.tmp)", () => {
    const dir = freshDir();
    const v = victim(dir);
    const cap = join(dir, "c.json");
    writeCaptureFile(cap, captureFor(2));
    const out = join(dir, "r.html");
    symlinkSync(v, `${out}.${process.pid}.tmp`);
    writeReport([cap], out);
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
    expect(readFileSync(out, "utf8")).toMatch(/^<!DOCTYPE html>/);
  });

  it("saveProfile (its name was already random; kept as a check): current and previous written, nothing else touched", () => {
    const dir = freshDir();
    const v = victim(dir);
    const paths = profilePaths(DEVICE_ID, { dir });
    symlinkSync(v, `${paths.current}.${process.pid}.tmp`);
    saveProfile(profileFor(1), { dir });
    saveProfile(profileFor(2), { dir });
    expect(readFileSync(v, "utf8")).toBe(VICTIM_TEXT);
    expect(tmpLeft(dir)).toEqual([]);
  });
});
