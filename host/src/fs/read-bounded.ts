// Reading a file the user or another program named, with bounds: only a regular file (a device
// such as /dev/zero, a FIFO, a socket or a folder is refused before anything is read; O_NONBLOCK
// keeps a FIFO without a writer from blocking the open) of at most `max_bytes`.

import { closeSync, constants, fstatSync, openSync, readSync } from "node:fs";

export type ReadRefusal =
  | { kind: "open"; code: string }
  | { kind: "not-regular"; what: string }
  | { kind: "too-large"; size: number }
  | { kind: "grew"; size: number }
  | { kind: "read"; code: string };

/** Thrown by readTextBounded; callers turn it into their own coded error. */
export class BoundedReadError extends Error {
  constructor(readonly refusal: ReadRefusal, message: string) {
    super(message);
  }
}

function kindOf(st: import("node:fs").Stats): string {
  if (st.isDirectory()) return "a folder";
  if (st.isFIFO()) return "a pipe (FIFO)";
  if (st.isCharacterDevice() || st.isBlockDevice()) return "a device";
  if (st.isSocket()) return "a socket";
  return "not a regular file";
}

export function readTextBounded(path: string, max_bytes: number): string {
  let fd: number;
  try {
    fd = openSync(path, constants.O_RDONLY | constants.O_NONBLOCK);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code ?? (e as Error).message;
    throw new BoundedReadError({ kind: "open", code }, `cannot read ${path}: ${code}`);
  }
  try {
    const st = fstatSync(fd);
    if (!st.isFile()) throw new BoundedReadError({ kind: "not-regular", what: kindOf(st) }, `${path} is ${kindOf(st)}`);
    if (st.size > max_bytes) throw new BoundedReadError({ kind: "too-large", size: st.size }, `${path} is ${st.size} bytes`);
    const buf = Buffer.alloc(st.size + 1);
    let got = 0;
    for (;;) {
      const n = readSync(fd, buf, got, buf.length - got, null);
      if (n === 0) break;
      got += n;
      if (got > st.size) throw new BoundedReadError({ kind: "grew", size: st.size }, `${path} grew while being read`);
    }
    return buf.toString("utf8", 0, got);
  } catch (e) {
    if (e instanceof BoundedReadError) throw e;
    const code = (e as NodeJS.ErrnoException).code ?? (e as Error).message;
    throw new BoundedReadError({ kind: "read", code }, `cannot read ${path}: ${code}`);
  } finally {
    closeSync(fd);
  }
}
