// Child for the restore kill test: swaps the current and previous calibration profiles with
// `calibrate restore`'s library call, over and over, until it is killed.
import { restorePreviousProfile } from "../../../host/src/calibration/profile-store.ts";
import { DEVICE_ID } from "./records.ts";

const dir = process.argv[2];
process.stdout.write("ready\n");
for (;;) restorePreviousProfile(DEVICE_ID, { dir });
