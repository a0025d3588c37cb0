// Child for the atomic-write tests: writes `bytes` bytes to `path` with writeFileAtomic (in 4 KiB
// chunks) and prints {"ok":true} or the error's code and message as one JSON line.
import { writeFileAtomic } from "../../../host/src/fs/atomic-write.ts";

const [path, bytes] = process.argv.slice(2);
function* chunks(n: number): Generator<Uint8Array> {
  for (let left = n; left > 0; left -= 4096) yield new Uint8Array(Math.min(4096, left)).fill(0x41);
}
try {
  writeFileAtomic(path, chunks(Number(bytes)));
  process.stdout.write(JSON.stringify({ ok: true }) + "\n");
} catch (e) {
  process.stdout.write(JSON.stringify({ ok: false, code: (e as { code?: string }).code, message: (e as Error).message }) + "\n");
}
