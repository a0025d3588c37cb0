// Where calibration profiles live and how they are written: one file per tester in the user's
// config directory ($HENRYTICK_CONFIG_DIR, else $XDG_CONFIG_HOME/henrytick, else
// ~/.config/henrytick; XDG Base Directory Specification). Every write goes through
// fs/atomic-write.ts, so a reader sees the old file or the new one, never half of either; the
// profile being replaced is kept as the "previous" file.

import { existsSync, mkdirSync, readFileSync, renameSync } from "node:fs";
import { homedir } from "node:os";
import { join } from "node:path";
import { writeFileAtomic } from "../fs/atomic-write.ts";
import { CalibrationError } from "./errors.ts";
import type { CalibrationProfile } from "./profile-schema.ts";
import { validateProfile } from "./profile-schema.ts";

export interface StoreOptions {
  /** Directory to use instead of the environment's; tests always pass one. */
  dir?: string;
  env?: Record<string, string | undefined>;
}

export function configDir(opts: StoreOptions = {}): string {
  if (opts.dir) return opts.dir;
  const env = opts.env ?? process.env;
  if (env.HENRYTICK_CONFIG_DIR) return env.HENRYTICK_CONFIG_DIR;
  // The XDG spec says a relative XDG_CONFIG_HOME is invalid and must be ignored.
  const xdg = env.XDG_CONFIG_HOME && env.XDG_CONFIG_HOME.startsWith("/") ? env.XDG_CONFIG_HOME : join(env.HOME || homedir(), ".config");
  return join(xdg, "henrytick");
}

export function profilePaths(device_id: string, opts: StoreOptions = {}): { current: string; previous: string; rejected: string } {
  const safe = device_id.replace(/[^A-Za-z0-9_-]/g, "_");
  const dir = configDir(opts);
  return {
    current: join(dir, `calibration-${safe}.json`),
    previous: join(dir, `calibration-${safe}.previous.json`),
    rejected: join(dir, `calibration-${safe}.rejected.json`),
  };
}

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
    text = readFileSync(path, "utf8");
  } catch (e) {
    throw new CalibrationError("PROFILE_UNREADABLE", `cannot read ${path} (${(e as Error).message}); check its permissions`);
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

/** Makes the previous profile current again; the replaced one (if valid) becomes the previous. */
export function restorePreviousProfile(device_id: string, opts: StoreOptions = {}): CalibrationProfile {
  const paths = profilePaths(device_id, opts);
  const prev = readProfileFile(paths.previous);
  if (!prev) throw new CalibrationError("NO_PREVIOUS", `no previous calibration profile is kept for tester ${device_id} in ${configDir(opts)}; calibrate it`);
  let cur: CalibrationProfile | null = null;
  try {
    cur = readProfileFile(paths.current);
  } catch {
    renameSync(paths.current, paths.rejected);
  }
  writeAtomically(paths.current, JSON.stringify(prev, null, 2) + "\n");
  if (cur) writeAtomically(paths.previous, JSON.stringify(cur, null, 2) + "\n");
  return prev;
}
