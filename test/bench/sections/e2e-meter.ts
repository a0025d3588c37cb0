// Meters for the end-to-end bench: host CPU with the simulated tester's own CPU taken out, GC
// time and bytes allocated, and the physics-only time of one reading on a given setting.

import { PerformanceObserver } from "node:perf_hooks";
import { GCProfiler } from "node:v8";
import type { MeasureSettings } from "../../../host/src/index.ts";
import type { PartModel } from "../../../host/src/index.ts";
import { SimTester } from "../../../host/src/sim/sim-tester.ts";
import { encodeCommand } from "../../../host/src/device/frames.ts";

/**
 * Full-speed USB bulk transfer: at most 19 packets of 64 bytes per 1 ms frame, 1 216 000 B/s
 * of payload (USB 2.0 specification, Table 5-9, value from memory). A CDC link cannot stream
 * the capture faster.
 */
export const USB_FS_BULK_BYTES_PER_S = 19 * 64 * 1000;

/** CPU the simulated tester spends (its HAL, the circuit, the firmware wasm), counted separately. */
export function meterSim(sim: SimTester): { cpu_ms: () => number } {
  let us = 0;
  for (const name of ["input", "advance"] as const) {
    const f = sim[name].bind(sim) as (x: never) => void;
    (sim as unknown as Record<string, (x: never) => void>)[name] = (x: never) => {
      const c0 = process.cpuUsage();
      try {
        f(x);
      } finally {
        const c = process.cpuUsage(c0);
        us += c.user + c.system;
      }
    };
  }
  return { cpu_ms: () => us / 1000 };
}

export interface WorkMeter {
  stop(): Promise<{ wall_ms: number; cpu_ms: number; gc_ms: number; allocated_mb: number }>;
}

/** Wall time, process CPU, GC pause time and bytes allocated (freed by GCs + heap growth) from now. */
export function startMeter(): WorkMeter {
  let gc_ms = 0;
  const obs = new PerformanceObserver((list) => {
    for (const e of list.getEntries()) gc_ms += e.duration;
  });
  obs.observe({ entryTypes: ["gc"] });
  const prof = new GCProfiler();
  prof.start();
  const used0 = process.memoryUsage().heapUsed;
  const c0 = process.cpuUsage();
  const w0 = performance.now();
  return {
    async stop() {
      const wall_ms = performance.now() - w0;
      const c = process.cpuUsage(c0);
      const used1 = process.memoryUsage().heapUsed;
      const stats = prof.stop()?.statistics ?? [];
      let freed = 0;
      for (const s of stats) freed += s.beforeGC.heapStatistics.usedHeapSize - s.afterGC.heapStatistics.usedHeapSize;
      await new Promise((r) => setImmediate(r)); // GC entries are delivered on a later turn
      obs.disconnect();
      return { wall_ms, cpu_ms: (c.user + c.system) / 1000, gc_ms, allocated_mb: (freed + used1 - used0) / 1e6 };
    },
  };
}

/**
 * Physics-only time of one reading on `s`: charge, ring (the switch opening to the last edge),
 * quiet (4 ring periods, at least 50 µs, as automatic ranging sets it) and the USB transfer of
 * the capture stream (header, data and trailer lines as the firmware sends them). Measured on a
 * fresh simulated tester of the same part and seed.
 */
export function physicsOnly(part: PartModel, seed: number, s: MeasureSettings, f_hz: number): { seconds: number; edges: number; bytes: number } {
  const sim = new SimTester({ part, seed });
  let text = "";
  sim.onOutput((b) => {
    text += new TextDecoder().decode(b);
  });
  const quiet_us = Math.max(50, Math.ceil(4e6 / f_hz));
  sim.input(encodeCommand("MS", [s.drive, s.tank, s.charge_us, s.edge_limit, s.timeout_ms, quiet_us]));
  let bytes = 0;
  let streaming = false;
  for (const line of text.split("\n")) {
    if (line.startsWith("CH")) streaming = true;
    if (streaming) bytes += line.length + 1;
    if (line.startsWith("CE")) streaming = false;
  }
  const e = sim.lastEdges!;
  const edges = e.written;
  const ring_s = edges > 0 ? e.ticks[edges - 1] / sim.board.timer.tick_hz : 0;
  return { seconds: s.charge_us * 1e-6 + ring_s + quiet_us * 1e-6 + bytes / USB_FS_BULK_BYTES_PER_S, edges, bytes };
}
