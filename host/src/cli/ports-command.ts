// henrytick ports: the serial ports this computer offers, to find a tester's path.

import { listSerialPorts } from "../transport/serial-transport.ts";
import { parse } from "./args.ts";

export async function runPorts(args: string[]): Promise<number> {
  const { values } = parse(args, { json: { type: "boolean" } });
  const ports = await listSerialPorts(); // PORTS_UNAVAILABLE goes to reportError with its advice
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
