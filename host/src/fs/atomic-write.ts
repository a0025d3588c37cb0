// The one way henrytick replaces a file (captures, reports, calibration profiles, restores): the
// new content goes to a temporary file created exclusively (O_CREAT|O_EXCL|O_NOFOLLOW, so a
// planted file or symlink is never opened, let alone followed) under an unpredictable name
// (crypto-random) in the target's own folder; the data is flushed (fsync), the temporary file is
// renamed over the target and the folder is flushed too, so after a crash or power cut a reader
// finds the old file or the new one, never half of either. On any failure the temporary file is
// removed and the target is left as it was; what a killed writer left is removed by a later write
// of the same target once it is an hour old.

import { randomBytes } from "node:crypto";
import { closeSync, constants, fsyncSync, lstatSync, openSync, readdirSync, renameSync, unlinkSync, writeSync } from "node:fs";
import { basename, dirname, join } from "node:path";
import { CodedError } from "../coded-error.ts";

export type FileWriteCode = "DISK_FULL" | "WRITE_DENIED" | "NO_SUCH_FOLDER" | "WRITE_FAILED";

export class FileWriteError extends CodedError<FileWriteCode> {
  constructor(code: FileWriteCode, message: string, readonly path: string) {
    super(code, message);
  }
}

export type FileContent = string | Uint8Array | Iterable<string | Uint8Array>;

export interface AtomicWriteOptions {
  /** Permission bits of a new file (before the umask); default 0o644. */
  mode?: number;
  /** The temporary file's name for attempt k (tests only); default random. */
  tempName?: (attempt: number) => string;
}

/** Attempts at an exclusive name before giving up (each collision means someone planted one). */
const NAME_ATTEMPTS = 8;

/** A temporary file of this name older than this was left by a writer that was killed. */
export const STALE_TEMP_MS = 60 * 60 * 1000;

/**
 * Removes temporary files a killed writer left for `target` (its own name pattern only, older
 * than STALE_TEMP_MS; a symlink is removed itself, never followed). Best effort: returns how
 * many went.
 */
export function removeStaleTemps(target: string, now = Date.now()): number {
  const dir = dirname(target);
  const prefix = `.${basename(target)}.`;
  const pattern = /^[0-9a-f]{24}\.tmp$/;
  let removed = 0;
  let names: string[];
  try {
    names = readdirSync(dir);
  } catch {
    return 0;
  }
  for (const n of names) {
    if (!n.startsWith(prefix) || !pattern.test(n.slice(prefix.length))) continue;
    try {
      const st = lstatSync(join(dir, n));
      if (now - st.mtimeMs < STALE_TEMP_MS) continue;
      unlinkSync(join(dir, n));
      removed++;
    } catch {
      // gone meanwhile, or not ours to remove
    }
  }
  return removed;
}

/** The temporary name for `target`: hidden, in the same folder, 96 random bits. */
export function tempNameFor(target: string): string {
  return `.${basename(target)}.${randomBytes(12).toString("hex")}.tmp`;
}

/** An fs error as a coded error whose next step fits its cause. */
export function fileWriteError(e: unknown, path: string): unknown {
  const code = (e as NodeJS.ErrnoException | undefined)?.code;
  if (typeof code !== "string") return e;
  const dir = dirname(path);
  switch (code) {
    case "ENOSPC":
    case "EDQUOT":
    case "EFBIG":
      return new FileWriteError("DISK_FULL", `cannot write ${path}: no space left (${code}); free some space on the disk holding ${dir} or write elsewhere`, path);
    case "EACCES":
    case "EPERM":
    case "EROFS":
      return new FileWriteError("WRITE_DENIED", `cannot write ${path}: not allowed (${code}); check the permissions of ${dir} or choose another path`, path);
    case "ENOENT":
    case "ENOTDIR":
      return new FileWriteError("NO_SUCH_FOLDER", `cannot write ${path}: the folder ${dir} does not exist (${code}); create it or choose another path`, path);
    case "EISDIR":
      return new FileWriteError("WRITE_FAILED", `cannot write ${path}: it is a folder; give a file name`, path);
    default:
      return new FileWriteError("WRITE_FAILED", `cannot write ${path} (${code}); check the disk and the path, then try again`, path);
  }
}

function writeAll(fd: number, chunk: string | Uint8Array): void {
  const buf = typeof chunk === "string" ? Buffer.from(chunk, "utf8") : chunk;
  let off = 0;
  while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
}

/** Flushes a folder's entry list; file systems that cannot do it for folders are left alone. */
function fsyncFolder(dir: string): void {
  let fd = -1;
  try {
    fd = openSync(dir, constants.O_RDONLY | constants.O_DIRECTORY);
    fsyncSync(fd);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code !== "EINVAL" && code !== "ENOTSUP" && code !== "EISDIR" && code !== "EBADF" && code !== "EPERM" && code !== "EACCES") throw e;
  } finally {
    if (fd >= 0) closeSync(fd);
  }
}

/** Creates the temporary file exclusively; returns its path and descriptor. */
function createTemp(target: string, opts: AtomicWriteOptions): { tmp: string; fd: number } {
  const dir = dirname(target);
  for (let attempt = 0; ; attempt++) {
    const tmp = join(dir, opts.tempName ? opts.tempName(attempt) : tempNameFor(target));
    try {
      const fd = openSync(tmp, constants.O_WRONLY | constants.O_CREAT | constants.O_EXCL | constants.O_NOFOLLOW, opts.mode ?? 0o644);
      return { tmp, fd };
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === "EEXIST" && attempt + 1 < NAME_ATTEMPTS) continue;
      throw e;
    }
  }
}

/**
 * Replaces `path` with `content` atomically. Throws FileWriteError (DISK_FULL, WRITE_DENIED,
 * NO_SUCH_FOLDER, WRITE_FAILED) on an fs failure, or what the content's iterator threw; either
 * way the target is untouched and no temporary file is left.
 */
export function writeFileAtomic(path: string, content: FileContent, opts: AtomicWriteOptions = {}): void {
  let created: { tmp: string; fd: number };
  try {
    created = createTemp(path, opts);
  } catch (e) {
    throw fileWriteError(e, path);
  }
  const { tmp } = created;
  let fd = created.fd;
  try {
    if (typeof content === "string" || content instanceof Uint8Array) writeAll(fd, content);
    else for (const chunk of content) writeAll(fd, chunk);
    fsyncSync(fd); // the data is on disk before the rename makes it the file
    closeSync(fd);
    fd = -1;
    renameSync(tmp, path);
  } catch (e) {
    if (fd >= 0) {
      try {
        closeSync(fd);
      } catch {
        // already failing; the unlink below still runs
      }
    }
    try {
      unlinkSync(tmp);
    } catch {
      // gone already (or the folder vanished): nothing left to clean
    }
    throw fileWriteError(e, path);
  }
  try {
    fsyncFolder(dirname(path)); // the rename itself survives a power cut
  } catch (e) {
    throw fileWriteError(e, path);
  }
  removeStaleTemps(path);
}
