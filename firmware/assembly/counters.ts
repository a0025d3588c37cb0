// Event counters since start, reported by the counters command: how often the tester pulsed,
// how often its capture path misbehaved, how often it refused the host.

export class Counters {
  /** Pulses fired (measurements that reached the charge phase). */
  measurements: i32 = 0;
  /** Capture faults (switch forced open) and self-tests that heard stray edges. */
  faults: i32 = 0;
  /** Commands answered with an error frame (abort notices excluded). */
  rejected: i32 = 0;
  /** Received bytes the port reported lost (fw_rx_overrun). */
  overruns: i32 = 0;
}

export const counters = new Counters();
