// henrytick ports: the serial ports this computer offers, to find a tester's path.

import { autoDetect } from "@serialport/bindings-cpp";
import { parse } from "./args.ts";

export async function runPorts(args: string[]): Promise<number> {
  const { values } = parse(args, { json: { type: "boolean" } });
  let ports: { path: string; manufacturer?: string; serialNumber?: string; vendorId?: string; productId?: string }[];
  try {
    ports = await autoDetect().list();
  } catch (e) {
    // Listing needs the system's device database (udev on Linux); containers often lack it.
    process.stderr.write(
      `henrytick: [PORTS_UNAVAILABLE] this system cannot list serial ports (${(e as Error).message.split("\n")[0]}); ` +
        "give the path directly, e.g. --port /dev/ttyACM0 (Linux), --port /dev/cu.usbmodem1101 (macOS) or --port COM3 (Windows); " +
        "on Linux, ls /dev/ttyACM* /dev/ttyUSB* shows the candidates\n",
    );
    return 1;
  }
  if (values.json) {
    process.stdout.write(JSON.stringify(ports, null, 2) + "\n");
    return 0;
  }
  if (ports.length === 0) {
    process.stdout.write("no serial ports found: plug the tester in (a data cable, not a charge-only one) and try again\n");
    return 0;
  }
  for (const p of ports) {
    const who = [p.manufacturer, p.vendorId && p.productId ? `${p.vendorId}:${p.productId}` : undefined, p.serialNumber].filter(Boolean).join(", ");
    process.stdout.write(`${p.path}${who ? `   ${who}` : ""}\n`);
  }
  return 0;
}
