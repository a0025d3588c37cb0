// `calibrate restore` killed at any point: a child swaps the current and previous calibration
// profiles in a loop (restorePreviousProfile) and is killed with SIGKILL at seeded random moments.
// After each kill the next load finishes an interrupted swap from its journal; then the two files
// must be the two profiles there were, one each: the profile being replaced is never lost and
// current and previous are never the same file.

import { existsSync, mkdtempSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, describe, expect, it } from "vitest";
import { runAndKill } from "./data-safety/run-and-kill.ts";
import { completePendingRestore, loadProfile, profilePaths, readProfileFile, restorePreviousProfile, saveProfile } from "../../host/src/calibration/profile-store.ts";
import { writeFileAtomic } from "../../host/src/fs/atomic-write.ts";
import { Random } from "../../host/src/sim/random.ts";
import { DEVICE_ID, profileFor } from "./data-safety/records.ts";

const CHILD = fileURLToPath(new URL("./data-safety/restorer.ts", import.meta.url));
const dir = mkdtempSync(join(tmpdir(), "henrytick-restore-kill-"));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const stamp = (p: { updated: string } | null) => p?.updated ?? null;

describe("calibrate restore killed at any point", () => {
  it("keeps both profiles, one current and one previous, after every kill", async () => {
    const a = profileFor(1);
    const b = profileFor(2);
    saveProfile(a, { dir });
    saveProfile(b, { dir }); // current b, previous a
    const paths = profilePaths(DEVICE_ID, { dir });
    const rng = new Random(1717);
    let journals = 0;
    const kills = 16;
    for (let k = 0; k < kills; k++) {
      await runAndKill(CHILD, dir, Math.floor(rng.uniform() * 120), "restorer");
      if (existsSync(paths.journal)) journals++;
      loadProfile(DEVICE_ID, { dir }); // finishes a swap cut short
      expect(existsSync(paths.journal)).toBe(false);
      const pair = [stamp(readProfileFile(paths.current)), stamp(readProfileFile(paths.previous))];
      expect(pair.sort(), `after kill ${k + 1}`).toEqual([a.updated, b.updated].sort());
    }
    // Seen on this machine: kills land mid-swap now and then; the count is reported, not required.
    console.log(`restore kill test: ${kills} kills, ${journals} left a journal that the next load finished`);
  }, 240_000);

  it("a journal left by a kill is finished on the next load: both files from the journal", () => {
    const d = mkdtempSync(join(tmpdir(), "henrytick-journal-"));
    try {
      const a = profileFor(3);
      const b = profileFor(4);
      saveProfile(a, { dir: d });
      saveProfile(b, { dir: d }); // current b, previous a
      const paths = profilePaths(DEVICE_ID, { dir: d });
      // The state a kill after the journal and the first replacement leaves: current a, previous a.
      writeFileAtomic(paths.journal, JSON.stringify({ format: "henrytick-restore-journal", device_id: DEVICE_ID, current: a, previous: b }));
      writeFileAtomic(paths.current, JSON.stringify(a));
      expect(loadProfile(DEVICE_ID, { dir: d })?.updated).toBe(a.updated);
      expect(readProfileFile(paths.previous)?.updated).toBe(b.updated);
      expect(existsSync(paths.journal)).toBe(false);
      // A torn journal was never acted on: removed, files untouched.
      writeFileAtomic(paths.journal, "{\"format\":\"henrytick-rest");
      expect(completePendingRestore(DEVICE_ID, { dir: d })).toBe(true);
      expect(readProfileFile(paths.current)?.updated).toBe(a.updated);
      expect(readProfileFile(paths.previous)?.updated).toBe(b.updated);
      // And restore still swaps.
      expect(restorePreviousProfile(DEVICE_ID, { dir: d }).updated).toBe(b.updated);
      expect(readProfileFile(paths.previous)?.updated).toBe(a.updated);
    } finally {
      rmSync(d, { recursive: true, force: true });
    }
  });
});
