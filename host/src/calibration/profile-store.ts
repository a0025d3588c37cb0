// Where calibration profiles live and how they are written: one file per tester in the user's
// config directory ($HENRYTICK_CONFIG_DIR, else $XDG_CONFIG_HOME/henrytick, else
// ~/.config/henrytick; XDG Base Directory Specification). Every write goes through
// fs/atomic-write.ts, so a reader sees the old file or the new one, never half of either; the
// profile being replaced is kept as the "previous" file.

import { closeSync, existsSync, fsyncSync, mkdirSync, openSync, renameSync, unlinkSync } from "node:fs";
import { homedir } from "node:os";
import { dirname, join } from "node:path";
import { writeFileAtomic } from "../fs/atomic-write.ts";
import { BoundedReadError, readTextBounded } from "../fs/read-bounded.ts";
import { CalibrationError } from "./errors.ts";
import type { CalibrationProfile } from "./profile-schema.ts";
import { validateProfile } from "./profile-schema.ts";

export interface StoreOptions {
  /** Directory to use instead of the environment's; tests always pass one. */
  dir?: string;
  env?: Record<string, string | undefined>;
  /**
   * The profiles of a simulated tester: kept apart from real testers' in the default folder
   * (its `simulated` subfolder), so a demo never touches the user's real store.
   */
  simulated?: boolean;
}

/** Where the CLI keeps a tester's profiles: an explicit folder as given, else the default, with simulated testers apart. */
export function storeFor(o: { configDir?: string; simulated: boolean }): StoreOptions {
  return { ...(o.configDir ? { dir: o.configDir } : {}), simulated: o.simulated };
}

/**
 * The profile folder: `dir` or $HENRYTICK_CONFIG_DIR as given (an explicit choice), else
 * $XDG_CONFIG_HOME/henrytick or ~/.config/henrytick, and for a simulated tester its
 * `simulated` subfolder.
 */
export function configDir(opts: StoreOptions = {}): string {
  if (opts.dir) return opts.dir;
  const env = opts.env ?? process.env;
  if (env.HENRYTICK_CONFIG_DIR) return env.HENRYTICK_CONFIG_DIR;
  // The XDG spec says a relative XDG_CONFIG_HOME is invalid and must be ignored.
  const xdg = env.XDG_CONFIG_HOME && env.XDG_CONFIG_HOME.startsWith("/") ? env.XDG_CONFIG_HOME : join(env.HOME || homedir(), ".config");
  return opts.simulated ? join(xdg, "henrytick", "simulated") : join(xdg, "henrytick");
}

export function profilePaths(device_id: string, opts: StoreOptions = {}): { current: string; previous: string; rejected: string; journal: string } {
  const safe = device_id.replace(/[^A-Za-z0-9_-]/g, "_");
  const dir = configDir(opts);
  return {
    current: join(dir, `calibration-${safe}.json`),
    previous: join(dir, `calibration-${safe}.previous.json`),
    rejected: join(dir, `calibration-${safe}.rejected.json`),
    journal: join(dir, `calibration-${safe}.restore-journal.json`),
  };
}

/** The largest profile file read: 256 tanks of a few hundred bytes each fit many times over. */
export const MAX_PROFILE_BYTES = 1 << 20;

/** Highest tank or drive index a profile may name: no board has more than 256 of either. */
export const MAX_PROFILE_INDEX = 255;

/** Index bounds the schema leaves open: a huge index would size arrays by it. */
function checkIndices(p: CalibrationProfile, where: string): CalibrationProfile {
  for (const [i, t] of p.tanks.entries()) {
    for (const [key, v] of [["index", t.index], ["drive", t.drive]] as const) {
      if (v !== undefined && !(Number.isSafeInteger(v) && v >= 0 && v <= MAX_PROFILE_INDEX)) {
        throw new CalibrationError("PROFILE_INVALID", `${where}field "tanks[${i}].${key}": ${v} is not a ${key === "index" ? "tank" : "drive"} index (0 to ${MAX_PROFILE_INDEX}); restore the previous profile ("henrytick calibrate restore") or calibrate again`);
      }
    }
  }
  return p;
}

/** Reads and validates a profile file; null when the file does not exist. */
export function readProfileFile(path: string): CalibrationProfile | null {
  if (!existsSync(path)) return null;
  let text: string;
  try {
    text = readTextBounded(path, MAX_PROFILE_BYTES);
  } catch (e) {
    const r = e instanceof BoundedReadError ? e.refusal : null;
    const why = r?.kind === "not-regular" ? `it is ${r.what}, not a profile file` : r?.kind === "too-large" ? `its ${r.size} bytes are more than a profile can be (at most ${MAX_PROFILE_BYTES})` : (e as Error).message;
    throw new CalibrationError("PROFILE_UNREADABLE", `cannot read ${path}: ${why}; check the file and its permissions, or remove it and calibrate again`);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new CalibrationError(
      "PROFILE_UNREADABLE",
      `${path} is not valid JSON (${(e as Error).message}), perhaps cut short; restore the previous profile ("henrytick calibrate restore") or calibrate again`,
    );
  }
  try {
    return checkIndices(validateProfile(raw), "");
  } catch (e) {
    if (e instanceof CalibrationError) e.message = `${path}: ${e.message}`;
    throw e;
  }
}

/** The tester's current profile, or null if it was never calibrated. Throws if the file is bad. */
export function loadProfile(device_id: string, opts: StoreOptions = {}): CalibrationProfile | null {
  completePendingRestore(device_id, opts);
  const p = readProfileFile(profilePaths(device_id, opts).current);
  if (p && p.device_id !== device_id) {
    throw new CalibrationError("PROFILE_WRONG_DEVICE", `the profile stored for tester ${device_id} says it belongs to ${p.device_id}; calibrate this tester again`);
  }
  return p;
}

function writeAtomically(path: string, text: string): void {
  writeFileAtomic(path, text, { mode: 0o644 });
}

/**
 * Stores a profile as the tester's current one. A valid current profile becomes the previous
 * one; an invalid current file is set aside as "rejected" so it never replaces a good previous.
 */
export function saveProfile(profile: CalibrationProfile, opts: StoreOptions = {}): { path: string; previous_kept: boolean } {
  const checked = checkIndices(validateProfile(JSON.parse(JSON.stringify(profile))), ""); // never write what we would refuse to read
  const paths = profilePaths(checked.device_id, opts);
  mkdirSync(configDir(opts), { recursive: true });
  completePendingRestore(checked.device_id, opts);
  let previousKept = false;
  if (existsSync(paths.current)) {
    let old: CalibrationProfile | null = null;
    try {
      old = readProfileFile(paths.current);
    } catch {
      renameSync(paths.current, paths.rejected);
    }
    if (old) {
      writeAtomically(paths.previous, JSON.stringify(old, null, 2) + "\n");
      previousKept = true;
    }
  }
  writeAtomically(paths.current, JSON.stringify(checked, null, 2) + "\n");
  return { path: paths.current, previous_kept: previousKept || existsSync(paths.previous) };
}

/**
 * Makes the previous profile current again; the replaced one (if valid) becomes the previous.
 * Two files change, so the swap is journalled: both new contents go first into one journal file
 * (written atomically), then each file is replaced, then the journal is removed. A restore killed
 * at any point is finished by the next load, save or restore (completePendingRestore): the
 * profile being replaced is never lost, and current and previous never end up the same file.
 */
export function restorePreviousProfile(device_id: string, opts: StoreOptions = {}): CalibrationProfile {
  completePendingRestore(device_id, opts);
  const paths = profilePaths(device_id, opts);
  const prev = readProfileFile(paths.previous);
  if (!prev) throw new CalibrationError("NO_PREVIOUS", `no previous calibration profile is kept for tester ${device_id} in ${configDir(opts)}; calibrate it`);
  let cur: CalibrationProfile | null = null;
  try {
    cur = readProfileFile(paths.current);
  } catch {
    renameSync(paths.current, paths.rejected);
  }
  const journal: RestoreJournal = { format: JOURNAL_FORMAT, device_id, current: prev, previous: cur };
  writeAtomically(paths.journal, JSON.stringify(journal) + "\n");
  applyJournal(journal, paths);
  return prev;
}

const JOURNAL_FORMAT = "henrytick-restore-journal";

interface RestoreJournal {
  format: typeof JOURNAL_FORMAT;
  device_id: string;
  current: CalibrationProfile;
  previous: CalibrationProfile | null;
}

function applyJournal(j: RestoreJournal, paths: ReturnType<typeof profilePaths>): void {
  writeAtomically(paths.current, JSON.stringify(j.current, null, 2) + "\n");
  if (j.previous) writeAtomically(paths.previous, JSON.stringify(j.previous, null, 2) + "\n");
  unlinkSync(paths.journal);
  fsyncFolderOf(paths.journal);
}

function fsyncFolderOf(path: string): void {
  const fd = openSync(dirname(path), "r");
  try {
    fsyncSync(fd);
  } catch {
    // a file system that cannot flush a folder: the unlink stands anyway
  } finally {
    closeSync(fd);
  }
}

/**
 * Finishes a restore that was interrupted (its journal is still there): writes both files from the
 * journal and removes it. A journal that cannot be read was never complete (it is written
 * atomically), so the files were not touched yet: it is removed. Returns whether one was found.
 */
export function completePendingRestore(device_id: string, opts: StoreOptions = {}): boolean {
  const paths = profilePaths(device_id, opts);
  if (!existsSync(paths.journal)) return false;
  let j: RestoreJournal | null = null;
  try {
    const raw = JSON.parse(readTextBounded(paths.journal, 2 * MAX_PROFILE_BYTES + 4096)) as Partial<RestoreJournal>;
    if (raw.format === JOURNAL_FORMAT && raw.device_id === device_id && raw.current) {
      j = {
        format: JOURNAL_FORMAT, device_id,
        current: checkIndices(validateProfile(raw.current), "journal: "),
        previous: raw.previous ? checkIndices(validateProfile(raw.previous), "journal: ") : null,
      };
    }
  } catch {
    j = null;
  }
  if (j) applyJournal(j, paths);
  else {
    unlinkSync(paths.journal);
    fsyncFolderOf(paths.journal);
  }
  return true;
}
