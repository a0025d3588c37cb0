// The profile command's data frames: everything a host needs to know about this board.
// Later fields are appended to existing frames and new frames added; hosts ignore what they do
// not know (docs/protocol.md).

import * as board from "./board.ts";
import { maxChargeUs, restAfterMaxUs } from "./interlocks.ts";
import { out, send } from "./link.ts";

export function sendProfile(captureBits: i32): void {
  out.begin("PT");
  out.putInt(board.TICK_HZ);
  send();
  for (let i: i32 = 0; i < board.DRIVE_COUNT; i++) {
    const maxUs: i32 = maxChargeUs(i);
    out.begin("PR");
    out.putInt(i);
    out.putInt(board.DRIVE_MILLIOHM[i]);
    out.putInt(board.DRIVE_POWER_MW[i]);
    out.putInt(maxUs);
    out.putInt(board.DRIVE_ENERGY_UJ[i]);
    // Rest owed after the longest allowed pulse on a cold resistor before another, ms (rounded up).
    out.putInt((restAfterMaxUs(i) + 999) / 1000);
    out.putInt(board.DRIVE_TAU_US[i]);
    send();
  }
  for (let i: i32 = 0; i < board.TANK_COUNT; i++) {
    out.begin("PC");
    out.putInt(i);
    out.putInt(board.TANK_PF[i]);
    send();
  }
  out.begin("PH");
  out.putInt(board.THRESHOLD_RISING_UV);
  out.putInt(board.THRESHOLD_FALLING_UV);
  send();
  out.begin("PD");
  out.putInt(board.COMPARATOR_NOISE_UV);
  out.putInt(board.COMPARATOR_NOISE_BW_KHZ);
  out.putInt(board.COMPARATOR_DELAY_RISE_PS);
  out.putInt(board.COMPARATOR_DELAY_FALL_PS);
  out.putInt(board.COMPARATOR_SKEW_U_PS);
  out.putInt(board.COMPARATOR_OVERDRIVE_FVS);
  send();
  out.begin("PS");
  out.putInt(board.SUPPLY_MV);
  out.putInt(board.CLAMP_MV);
  send();
  out.begin("PL");
  out.putInt(board.BUFFER_EDGES);
  // No fixed rest and no duty-cycle rule: the rest comes from each resistor's thermal budget
  // (PR). The two fields stay, as zeros, for hosts that read the fields after them.
  out.putInt(0);
  out.putInt(0);
  out.putInt(board.MAX_TIMEOUT_MS);
  out.putInt(board.SETTLE_US);
  out.putInt(board.MAX_CHARGE_US);
  out.putInt(board.SELF_TEST_US);
  send();
  out.begin("PX");
  out.putInt(captureBits);
  send();
}
