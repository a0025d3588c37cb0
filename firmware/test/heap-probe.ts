// Test-only entry: the firmware plus one export that reveals the bump allocator's position.
// Two calls to fw_heap_mark differ by exactly one empty block when nothing else allocated.
import { fw_busy, fw_init, fw_poll, fw_rx, fw_rx_overrun } from "../assembly/index.ts";

export { fw_busy, fw_init, fw_poll, fw_rx, fw_rx_overrun };

export function fw_heap_mark(): usize {
  return heap.alloc(0);
}
