// Child process for the sort-log kill test: appends sort-log records (CSV and JSON Lines) in a
// loop until it is killed, resuming after the last whole record of the JSON Lines log, as a
// restarted sorting session does.

import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { SortLog } from "../../../host/src/workflows/sort-log.ts";
import { partRecordFor } from "./records.ts";

const dir = process.argv[2];
const jsonl = join(dir, "parts.jsonl");
let k = 1;
if (existsSync(jsonl)) {
  const whole = readFileSync(jsonl, "utf8").split("\n").slice(0, -1);
  if (whole.length > 0) k = (JSON.parse(whole[whole.length - 1]) as { part: number }).part + 1;
}
const log = SortLog.open({ csv: join(dir, "parts.csv"), jsonl });
process.stdout.write("ready\n");
for (;;) log.append(partRecordFor(k++));
