/*
 * Template port: the smallest complete port of the henrytick firmware to a microcontroller,
 * around the wasm2c build (henrytick.c / henrytick.h) and the runtime in ../runtime. It compiles
 * as it stands (the tests build it for the host and for Cortex-M0+ / M4); every place that must
 * touch real hardware is a `board_` function at the bottom, stubbed here, each saying what the
 * real one does. docs/porting.md is the contract this file follows.
 *
 * Shape: interrupts only move bytes and let DMA capture edges; everything else runs in the main
 * loop, which is the only caller of the firmware (the firmware is not reentrant).
 */
#include <stdint.h>

#include "henrytick-rt.h"
#include "henrytick.h"

/* ---- board support: replace these with your MCU's drivers ---- */
static uint32_t board_timer_now(void);                 /* free-running capture timer, ticks */
static void board_select(uint32_t drive, uint32_t tank); /* range outputs (GPIO / analog switches) */
static void board_gate_pulse_and_capture(uint32_t charge_ticks, volatile int32_t* buf, uint32_t capacity);
static uint32_t board_capture_written(void);           /* DMA entries written so far */
static void board_gate_off_capture_stop(void);         /* gate low NOW, capture DMA off */
static void board_usb_write(const uint8_t* p, uint32_t n); /* blocks until queued, never drops */
static uint32_t board_unique_id(void);
static void board_sleep_until(uint32_t tick, int wake_on_rx); /* WFI with a compare wake-up */

/* ---- receive ring: filled by the UART / USB interrupt, drained by the main loop ---- */
#define RX_RING 64u
static volatile uint8_t rx_ring[RX_RING];
static volatile uint32_t rx_head, rx_tail;
static volatile uint32_t rx_lost;

/* Call from the receive interrupt. */
void port_on_rx_byte(uint8_t b) {
  uint32_t next = (rx_head + 1u) % RX_RING;
  if (next == rx_tail) {
    rx_lost++; /* the main loop reports it with fw_rx_overrun() */
    return;
  }
  rx_ring[rx_head] = b;
  rx_head = next;
}

/* ---- the HAL: the firmware's imports, as wasm2c names them ---- */
struct Z_hal_instance_t {
  Z_henrytick_instance_t* fw;
};

static Z_henrytick_instance_t fw;
static struct Z_hal_instance_t hal = {&fw};

u32 Z_halZ_now(struct Z_hal_instance_t* h) {
  (void)h;
  return board_timer_now();
}

void Z_halZ_select(struct Z_hal_instance_t* h, u32 drive, u32 tank) {
  (void)h;
  board_select(drive, tank);
}

void Z_halZ_pulse(struct Z_hal_instance_t* h, u32 charge_ticks, u32 buf, u32 capacity) {
  /* buf is an offset into the firmware's linear memory: turn it into an address for the DMA. */
  volatile int32_t* p = (volatile int32_t*)(void*)(h->fw->w2c_memory.data + buf);
  board_gate_pulse_and_capture(charge_ticks, p, capacity);
}

u32 Z_halZ_capture_count(struct Z_hal_instance_t* h) {
  (void)h;
  return board_capture_written();
}

void Z_halZ_stop(struct Z_hal_instance_t* h) {
  (void)h;
  board_gate_off_capture_stop();
}

void Z_halZ_uart_write(struct Z_hal_instance_t* h, u32 ptr, u32 len) {
  board_usb_write(h->fw->w2c_memory.data + ptr, len);
}

u32 Z_halZ_device_id(struct Z_hal_instance_t* h) {
  (void)h;
  return board_unique_id();
}

u32 Z_halZ_capture_bits(struct Z_hal_instance_t* h) {
  (void)h;
  return 0; /* extended mode: a free-running 32-bit timer (or a chained pair), captures merged */
}

/* A trap means a firmware bug: make the hardware safe first, then start the firmware afresh. */
void ht_port_trap(wasm_rt_trap_t code) {
  (void)code;
  board_gate_off_capture_stop();
}

static void start_firmware(void) {
  Z_henrytick_instantiate(&fw, &hal);
  /* The linear memory's backing must hold what the firmware allocated: traps (switch open) if not. */
  ht_rt_require_memory(Z_henrytickZ_fw_memory_used(&fw));
  Z_henrytickZ_fw_init(&fw);
}

int main(void) {
  board_gate_off_capture_stop(); /* before anything else: the switch must start open */
  wasm_rt_init();
  Z_henrytick_init_module();
  if (HT_RT_TRY()) {
    start_firmware();
    HT_RT_DONE();
  }
  for (;;) {
    if (!HT_RT_TRY()) {
      /* Trapped inside the firmware: the gate is already off. Restart the instance. */
      Z_henrytick_free(&fw);
      start_firmware();
      continue;
    }
    if (rx_lost) {
      rx_lost = 0;
      Z_henrytickZ_fw_rx_overrun(&fw);
    }
    /* Offer received bytes; one the firmware cannot take yet stays in the ring (flow control). */
    while (rx_tail != rx_head && Z_henrytickZ_fw_rx(&fw, rx_ring[rx_tail])) {
      rx_tail = (rx_tail + 1u) % RX_RING;
    }
    uint32_t wait = Z_henrytickZ_fw_poll(&fw);
    int busy = Z_henrytickZ_fw_busy(&fw) != 0;
    HT_RT_DONE();
    if (rx_tail != rx_head) continue; /* more input waiting: poll again at once */
    if (busy || wait > 0) board_sleep_until(board_timer_now() + (wait > 0 ? wait : 1u), 1);
    else board_sleep_until(0, 1); /* idle: sleep until a byte arrives */
  }
}

/* ---- stubs: what each real driver must do (see docs/porting.md) ---- */
static volatile uint32_t fake_timer;
static uint32_t board_timer_now(void) { return fake_timer++; /* read TIMx->CNT */ }
static void board_select(uint32_t drive, uint32_t tank) { (void)drive; (void)tank; /* set range GPIOs */ }
static void board_gate_pulse_and_capture(uint32_t charge_ticks, volatile int32_t* buf, uint32_t capacity) {
  /* Arm DMA: each capture channel's raw register -> its own ring, merged into buf (`capacity`
     entries) by ../common/capture-merge.c. If charge_ticks > 0: gate high now and program the
     compare that drives it low charge_ticks later; that compare value is the capture's zero.
     Never reset the timer (now() must stay monotonic). Entry format: ticks since the zero << 1 |
     comparator level. */
  (void)charge_ticks; (void)buf; (void)capacity;
}
static uint32_t board_capture_written(void) { return 0; /* merge the rings, return the entries in buf */ }
static void board_gate_off_capture_stop(void) { /* gate pin low (forced), disable capture DMA */ }
static void board_usb_write(const uint8_t* p, uint32_t n) { (void)p; (void)n; /* USB CDC TX */ }
static uint32_t board_unique_id(void) { return 0x12345678u; /* hash of the MCU unique ID */ }
static void board_sleep_until(uint32_t tick, int wake_on_rx) { (void)tick; (void)wake_on_rx; /* WFI */ }
