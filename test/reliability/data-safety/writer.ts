// Child process for the kill test: writes capture files, calibration profiles and sort-log
// records in a loop until it is killed. It resumes numbering after the last whole record in the
// JSON Lines log, as a restarted sorting session would.

import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { writeCaptureFile } from "../../../host/src/capture/capture-file.ts";
import { saveProfile } from "../../../host/src/calibration/profile-store.ts";
import { SortLog } from "../../../host/src/workflows/sort-log.ts";
import { CAPTURE_SLOTS, captureFor, partRecordFor, profileFor } from "./records.ts";

const dir = process.argv[2];
const jsonl = join(dir, "parts.jsonl");
let k = 1;
if (existsSync(jsonl)) {
  const whole = readFileSync(jsonl, "utf8").split("\n").slice(0, -1);
  if (whole.length > 0) k = (JSON.parse(whole[whole.length - 1]) as { part: number }).part + 1;
}
const log = SortLog.open({ csv: join(dir, "parts.csv"), jsonl });
process.stdout.write("ready\n");
for (;;) {
  writeCaptureFile(join(dir, `capture-${k % CAPTURE_SLOTS}.json`), captureFor(k));
  saveProfile(profileFor(k), { dir });
  log.append(partRecordFor(k));
  k++;
}
