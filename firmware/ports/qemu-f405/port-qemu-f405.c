/*
 * Emulated-board port: the henrytick firmware (wasm2c build) on QEMU's STM32F405 machine
 * (`netduinoplus2`), for the Cortex-M4 it models and, with `-cpu cortex-m0`, the ARMv6-M build.
 * Register-level, no vendor code. docs/porting.md ("The emulated board") describes how it is run.
 *
 *   USART1  host link: the firmware's serial protocol, on QEMU's first -serial (a pseudo-terminal).
 *           Receive by interrupt into a ring, transmit polled.
 *   USART2  front-end link to the host's edge server, on QEMU's second -serial (a unix socket).
 *           QEMU models no input capture and no comparator, so for every pulse (and every listen
 *           with the switch open) this port asks the edge server, which runs the host simulator's
 *           board model, for the edges the ring produces. The exchange is framed, sequence-numbered
 *           and CRC-checked (format below); the emulated time it takes is hidden from now().
 *   SysTick now(): the core clock (168 MHz in QEMU's model) scaled to the profile's 64 MHz tick by
 *           a 0.32 fixed-point factor the edge server sends (it carries the board's crystal error).
 *   TIM2    wake-up timer for the main loop's timed sleeps.
 *
 * The capture is emulated like a timer with DMA: the reply's entries go straight into the
 * firmware's buffer (already in extended format, ticks since the switch opened << 1 | level), and
 * capture_count() reveals an entry only once now() has passed its tick. The gate is emulated too:
 * closed by pulse(), opened when now() passes the charge time or at once by stop().
 *
 * A stalled or corrupted front-end link forces the switch open and makes the capture report a
 * count beyond its capacity, which the firmware treats as a capture fault (ER 11, switch open).
 * The link then stays down until reset: every later pulse faults the same way.
 *
 * Front-end link frames, both directions (little-endian):
 *   0xE5 0x1D | type u8 | seq u8 | length u16 | payload[length] | CRC-16/CCITT-FALSE u16
 * The CRC covers type, seq, length and payload. A reply carries its request's type | 0x80 and its
 * seq; a frame with another seq is skipped (a late reply to an earlier request).
 *   HELLO  (1)  port: cpu_hz u32, core u8 (0 Cortex-M0, 1 Cortex-M4)
 *        (0x81) server: device_id u32, tick_mul u32 (64 MHz ticks per core cycle << 32)
 *   PULSE  (2)  port: drive u8, tank u8, 0 u16, charge_ticks u32, capacity u32, open_tick u32
 *               (charge_ticks 0: a listen with the switch open; open_tick is now() + charge)
 *        (0x82) server: count u32 (<= capacity), count entries u32
 *   TIME   (3)  port: nothing
 *        (0x83) server: the host's clock u64, in profile ticks at the board's crystal rate
 * Before computing a pulse's ring the server sends WORKING (0x42, same seq, no payload), so a
 * server that is alive but busy is told from one that has stalled.
 */
#include <stdint.h>
#include <string.h>

#include "henrytick-board.h" /* HT_BOARD_TICK_HZ: the board's tick rate (generated, native-build.ts) */
#include "henrytick-rt.h"
#include "henrytick.h"

/* STM32F405 registers (RM0090) and Cortex-M system registers, shared with the F411 port */
#include "stm32f4-regs.h"

/* QEMU's STM32F405 model runs the core (and SysTick's processor clock) at 168 MHz, with no clock
   tree to program: RCC is a placeholder there, so the enables below are what a real chip needs. */
#define CPU_HZ 168000000u
/* SysTick's longest period (24 bits, 0.1 s): it only extends the counter, and every wake-up it
   causes costs QEMU a pass of its main loop. TIM2 wakes the timed sleeps. */
#define SYSTICK_PERIOD (1u << 24)
/* The board's tick (64 MHz on the reference board) over 168 MHz in 0.32 fixed point, rounded,
   until the edge server sends the board's own factor. */
#define TICKS_PER_SECOND HT_BOARD_TICK_HZ
#define TICK_MUL_NOMINAL ((uint32_t)((((uint64_t)TICKS_PER_SECOND << 32) + CPU_HZ / 2u) / CPU_HZ))
/* Longest silence inside a front-end exchange before the link counts as stalled (see fe_getc):
   the server's first frame comes from its event loop at once (for a pulse, a WORKING frame
   before it computes the ring), and a frame's bytes follow one another. */
#ifndef LINK_TIMEOUT_WAKES
#define LINK_TIMEOUT_WAKES 8000u
#endif
/* While the server computes a ring (after its WORKING frame): many times longer. */
#define LINK_WORKING_WAKES (100u * LINK_TIMEOUT_WAKES)

#ifndef QEMU_PORT_CORE
#define QEMU_PORT_CORE 1
#endif

/* ---- state the host reads back through QEMU's monitor (symbols in the ELF) ---- */
/* 1 while the emulated low-side switch is closed. */
__attribute__((used)) volatile uint32_t ht_qemu_gate = 0;
/* Front-end exchanges that failed: 0 healthy; the link is down from the first one on. */
__attribute__((used)) volatile uint32_t ht_qemu_link_faults = 0;
/* Front-end exchanges completed (HELLO included). */
__attribute__((used)) volatile uint32_t ht_qemu_link_exchanges = 0;
/* Set by a fault exception (the gate is opened first). */
__attribute__((used)) volatile uint32_t ht_qemu_hard_fault = 0;

static inline uint32_t irq_save(void) {
  uint32_t primask;
  __asm volatile("mrs %0, primask\n cpsid i" : "=r"(primask)::"memory");
  return primask;
}
static inline void irq_restore(uint32_t primask) {
  __asm volatile("msr primask, %0" ::"r"(primask) : "memory");
}
/* Sleeps until an interrupt is pending. Called with interrupts masked, so a wake-up that arrives
   between the caller's check and the WFI is not lost; the handler runs once they are unmasked. */
static inline void wait_for_interrupt(void) {
  __asm volatile("wfi" ::: "memory");
}

/* ---- time ---- */
/* 64 MHz ticks at the last SysTick wrap: whole ticks and a 0.32 fraction. */
static volatile uint64_t wrap_ticks;
static volatile uint32_t wrap_frac;
static uint32_t tick_mul = TICK_MUL_NOMINAL;
/* Emulated time spent in front-end exchanges: not the firmware's (hardware has no such pause). */
static uint64_t hidden_ticks;
/* Host time added while idle, so that idle time follows the host's clock (see clock_sync). */
static uint64_t idle_credit;

void SysTick_Handler(void) {
  uint64_t inc = (uint64_t)SYSTICK_PERIOD * tick_mul;
  uint64_t frac = (uint64_t)wrap_frac + (uint32_t)inc;
  wrap_frac = (uint32_t)frac;
  wrap_ticks += (inc >> 32) + (frac >> 32);
}

/* Emulated time in 64 MHz ticks, including the front-end exchanges. */
static uint64_t raw_ticks(void) {
  uint32_t m = irq_save();
  uint32_t v = SYST_CVR;
  uint64_t whole = wrap_ticks;
  uint64_t frac = wrap_frac;
  if (SCB_ICSR & SCB_ICSR_PENDSTSET) {
    /* Wrapped, handler not run yet: count the wrap, and read the counter again after it. */
    v = SYST_CVR;
    frac += (uint64_t)SYSTICK_PERIOD * tick_mul;
  }
  irq_restore(m);
  frac += (uint64_t)(SYSTICK_PERIOD - 1u - v) * tick_mul;
  return whole + (frac >> 32);
}

/* The firmware's clock: emulated time without the exchanges, plus the idle credit. */
static uint64_t clock_ticks(void) {
  return raw_ticks() - hidden_ticks + idle_credit;
}

/* ---- wake-up timer: TIM2, one shot ---- */
static volatile uint32_t wake_fired;

void TIM2_IRQHandler(void) {
  TIM2_SR = 0;
  TIM2_CR1 = 0;
  wake_fired = 1;
}

/* Waits executed rather than slept: short enough that arming the timer would take longer. */
#define SPIN_TICKS (20u * (TICKS_PER_SECOND / 1000000u)) /* 20 us */

/*
 * Sleeps until `deadline` (firmware ticks) or a host byte. TIM2 (core clock, 21 cycles per 8
 * ticks of a 64 MHz board) wakes the core a little early; the rest is run through by executing, so the deadline is
 * met to a few instructions. Under -icount sleep=off the slept part takes no real time.
 */
_Static_assert((uint64_t)CPU_HZ * 8u == (uint64_t)TICKS_PER_SECOND * 21u, "sleep_until's 21/8 assumes a 64 MHz board tick");
static uint32_t now_ticks(void);
static void sleep_until(uint32_t deadline, volatile uint32_t* head, volatile uint32_t* tail) {
  for (;;) {
    int32_t left = (int32_t)(deadline - now_ticks());
    if (left <= 0 || *head != *tail) return;
    if (left <= (int32_t)SPIN_TICKS) continue;
    wake_fired = 0;
    TIM2_CR1 = TIM_CR1_CEN;
    TIM2_CNT = 0;
    TIM2_ARR = (uint32_t)(((uint64_t)(uint32_t)left - SPIN_TICKS / 2u) * 21u / 8u);
    TIM2_DIER = TIM_DIER_UIE;
    uint32_t m = irq_save();
    if (!wake_fired && *head == *tail) wait_for_interrupt(); /* also woken by SysTick: then re-armed */
    irq_restore(m);
    TIM2_CR1 = 0;
  }
}

/* ---- host link: USART1 ---- */
#define RX_RING 256u
static volatile uint8_t rx_ring[RX_RING];
static volatile uint32_t rx_head, rx_tail;

void USART1_IRQHandler(void) {
  while (USART_SR(USART1) & USART_SR_RXNE) {
    uint32_t next = (rx_head + 1u) % RX_RING;
    if (next == rx_tail) {
      /* Ring full: stop taking bytes. QEMU's USART then holds the rest back (it cannot overrun),
         which is flow control; the main loop re-enables reception once it has drained the ring. */
      USART_CR1(USART1) &= ~USART_CR1_RXNEIE;
      return;
    }
    rx_ring[rx_head] = (uint8_t)USART_DR(USART1);
    rx_head = next;
  }
}

static void uart_put(uint32_t base, const uint8_t* p, uint32_t n) {
  for (uint32_t i = 0; i < n; i++) {
    while (!(USART_SR(base) & USART_SR_TXE)) {
    }
    USART_DR(base) = p[i];
  }
}

/* ---- front-end link: USART2 ---- */
#define FE_RING 512u
static volatile uint8_t fe_ring[FE_RING];
static volatile uint32_t fe_head, fe_tail;

void USART2_IRQHandler(void) {
  while (USART_SR(USART2) & USART_SR_RXNE) {
    uint32_t next = (fe_head + 1u) % FE_RING;
    if (next == fe_tail) {
      USART_CR1(USART2) &= ~USART_CR1_RXNEIE; /* as on USART1: held back until there is room */
      return;
    }
    fe_ring[fe_head] = (uint8_t)USART_DR(USART2);
    fe_head = next;
  }
}

/*
 * Next front-end byte, or -1 when none arrived within LINK_TIMEOUT_WAKES wake-ups. The core sleeps
 * between bytes: a busy core would compete with QEMU's I/O thread, which delivers them one at a
 * time. Under `-icount sleep=off` each sleep ends at once at the next timer deadline (SysTick,
 * 0.1 s of emulated time, all of it hidden from the firmware), so the timeout is a count of QEMU
 * main-loop passes: a fraction of a second of host time, more on a loaded machine, far beyond
 * the few milliseconds the edge server takes to start a reply.
 */
static uint32_t fe_budget = LINK_TIMEOUT_WAKES;
static int fe_getc(void) {
  for (uint32_t wakes = 0; wakes < fe_budget; wakes++) {
    uint32_t m = irq_save();
    if (fe_tail != fe_head) {
      uint8_t b = fe_ring[fe_tail];
      fe_tail = (fe_tail + 1u) % FE_RING;
      USART_CR1(USART2) |= USART_CR1_RXNEIE;
      irq_restore(m);
      return b;
    }
    wait_for_interrupt();
    irq_restore(m);
  }
  return -1;
}

#define LINK_MAGIC0 0xE5u
#define LINK_MAGIC1 0x1Du
#define LINK_HELLO 1u
#define LINK_PULSE 2u
#define LINK_TIME 3u
#define LINK_REPLY 0x80u
#define LINK_WORKING 0x40u

static uint16_t crc16_update(uint16_t crc, uint8_t byte) {
  crc ^= (uint16_t)byte << 8;
  for (int bit = 0; bit < 8; bit++) crc = (crc & 0x8000u) ? (uint16_t)((crc << 1) ^ 0x1021u) : (uint16_t)(crc << 1);
  return crc;
}

static void put_u32(uint8_t* p, uint32_t v) {
  p[0] = (uint8_t)v;
  p[1] = (uint8_t)(v >> 8);
  p[2] = (uint8_t)(v >> 16);
  p[3] = (uint8_t)(v >> 24);
}
static uint32_t get_u32(const uint8_t* p) {
  return (uint32_t)p[0] | ((uint32_t)p[1] << 8) | ((uint32_t)p[2] << 16) | ((uint32_t)p[3] << 24);
}

static uint8_t link_seq;
static int link_down;

static void link_send(uint8_t type, const uint8_t* payload, uint16_t len) {
  uint8_t head[6] = {LINK_MAGIC0, LINK_MAGIC1, type, link_seq, (uint8_t)len, (uint8_t)(len >> 8)};
  uint16_t crc = 0xFFFFu;
  for (int i = 2; i < 6; i++) crc = crc16_update(crc, head[i]);
  for (uint16_t i = 0; i < len; i++) crc = crc16_update(crc, payload[i]);
  uint8_t tail[2] = {(uint8_t)crc, (uint8_t)(crc >> 8)};
  uart_put(USART2, head, 6);
  uart_put(USART2, payload, len);
  uart_put(USART2, tail, 2);
}

/*
 * Receives the reply to the request just sent. The first `small_len` payload bytes go to `small`;
 * the rest (a pulse's entries) straight to `bulk`, at most `bulk_max` bytes. Returns the payload
 * length, or -1 on a stall, a CRC error or a malformed frame.
 */
static int32_t link_receive(uint8_t type, uint8_t* small, uint32_t small_len, uint8_t* bulk, uint32_t bulk_max) {
  fe_budget = LINK_TIMEOUT_WAKES;
  for (;;) {
    int c = fe_getc();
    if (c < 0) return -1;
    fe_budget = LINK_TIMEOUT_WAKES;
    if ((uint8_t)c != LINK_MAGIC0) continue; /* resynchronise on the frame start */
    c = fe_getc();
    if (c < 0) return -1;
    if ((uint8_t)c != LINK_MAGIC1) continue;
    uint8_t head[4];
    uint16_t crc = 0xFFFFu;
    for (int i = 0; i < 4; i++) {
      c = fe_getc();
      if (c < 0) return -1;
      head[i] = (uint8_t)c;
      crc = crc16_update(crc, head[i]);
    }
    uint32_t len = (uint32_t)head[2] | ((uint32_t)head[3] << 8);
    int mine = head[0] == (type | LINK_REPLY) && head[1] == link_seq;
    int working = head[0] == (type | LINK_WORKING) && head[1] == link_seq && len == 0;
    if (mine && len > small_len + bulk_max) return -1; /* longer than asked for: malformed */
    for (uint32_t i = 0; i < len; i++) {
      c = fe_getc();
      if (c < 0) return -1;
      crc = crc16_update(crc, (uint8_t)c);
      if (!mine) continue;
      if (i < small_len) small[i] = (uint8_t)c;
      else bulk[i - small_len] = (uint8_t)c;
    }
    int lo = fe_getc();
    int hi = lo < 0 ? -1 : fe_getc();
    if (hi < 0) return -1;
    if ((uint16_t)(lo | (hi << 8)) != crc) return -1; /* corrupted: its seq cannot be trusted either */
    if (mine) return (int32_t)len;
    /* The server is computing our reply: wait longer for its first byte. Any other complete,
       intact frame is for an earlier request: skip it and wait for ours. */
    fe_budget = working ? LINK_WORKING_WAKES : LINK_TIMEOUT_WAKES;
  }
}

/*
 * One request/reply. The emulated time it takes is hidden from now(): on hardware the edges
 * arrive with no such pause. Only a failed PULSE brings the link down (a capture is at stake);
 * a HELLO is tried again and a TIME sync skipped, their late replies dropped by their seq.
 */
/* Non-fatal exchanges that failed (HELLO retried, TIME sync skipped). */
__attribute__((used)) volatile uint32_t ht_qemu_link_misses = 0;

static int32_t link_exchange(uint8_t type, const uint8_t* req, uint16_t req_len, uint8_t* small, uint32_t small_len,
                             uint8_t* bulk, uint32_t bulk_max) {
  if (link_down) return -1;
  uint64_t t0 = raw_ticks();
  link_seq++;
  link_send(type, req, req_len);
  int32_t n = link_receive(type, small, small_len, bulk, bulk_max);
  hidden_ticks += raw_ticks() - t0;
  if (n >= 0) {
    ht_qemu_link_exchanges++;
  } else if (type == LINK_PULSE) {
    link_down = 1;
    ht_qemu_link_faults++;
  } else {
    ht_qemu_link_misses++;
  }
  return n;
}

static uint32_t board_id = 0;

static void link_hello(void) {
  uint8_t req[5];
  put_u32(req, CPU_HZ);
  req[4] = QEMU_PORT_CORE;
  uint8_t rep[8];
  /* At start the edge server may still be busy setting up: ask a few times before giving up
     (then every pulse faults, switch open). */
  for (int attempt = 0; attempt < 20; attempt++) {
    if (link_exchange(LINK_HELLO, req, sizeof req, rep, sizeof rep, 0, 0) == (int32_t)sizeof rep) {
      board_id = get_u32(rep);
      tick_mul = get_u32(rep + 4);
      return;
    }
  }
  link_down = 1;
  ht_qemu_link_faults++;
}

/*
 * Idle time follows the host's clock. While the core sleeps waiting for the host, emulated time
 * stands still (see the main loop), so each time a host byte ends an idle spell the port asks the
 * edge server for the host's time (in board ticks, crystal error included): when more host time
 * than emulated time has passed since the last such sync, the clock moves forward by the
 * difference. Never back: a span in which emulated time ran ahead (a measurement's waits, which
 * QEMU skips) stays as it was. Only done while idle, so no capture or timed wait is in progress.
 */
static uint64_t sync_clock, sync_host;
static int synced;

static void clock_sync(void) {
  uint8_t rep[8];
  if (link_exchange(LINK_TIME, 0, 0, rep, sizeof rep, 0, 0) != (int32_t)sizeof rep) return;
  uint64_t host = (uint64_t)get_u32(rep) | ((uint64_t)get_u32(rep + 4) << 32);
  uint64_t clock = clock_ticks();
  if (synced && host - sync_host > clock - sync_clock) idle_credit += (host - sync_host) - (clock - sync_clock);
  synced = 1;
  sync_host = host;
  sync_clock = clock_ticks();
}

/* ---- the HAL ---- */
struct Z_hal_instance_t {
  Z_henrytick_instance_t* fw;
};

static Z_henrytick_instance_t fw;
static struct Z_hal_instance_t hal = {&fw};

static struct {
  uint8_t* entries; /* the firmware's buffer */
  uint32_t capacity, total, shown, open_tick;
  int live, stopped, faulted;
} cap;
static uint32_t gate_open_at;

static uint32_t now_ticks(void) {
  uint32_t t = (uint32_t)clock_ticks();
  /* The one-pulse timer: the gate opens by itself once the charge time is over. */
  if (ht_qemu_gate && (int32_t)(t - gate_open_at) >= 0) ht_qemu_gate = 0;
  return t;
}

static void gate_off_capture_stop(void) {
  ht_qemu_gate = 0;
  if (cap.live && !cap.stopped) {
    /* Keep what has been captured up to now, then freeze the count. */
    int32_t elapsed = (int32_t)(now_ticks() - cap.open_tick);
    while (!cap.faulted && cap.shown < cap.total && (int32_t)(get_u32(cap.entries + 4u * cap.shown) >> 1) <= elapsed) cap.shown++;
    cap.stopped = 1;
  }
}

u32 Z_halZ_now(struct Z_hal_instance_t* h) {
  (void)h;
  return now_ticks();
}

static uint32_t range_drive, range_tank;

void Z_halZ_select(struct Z_hal_instance_t* h, u32 drive, u32 tank) {
  (void)h;
  range_drive = drive; /* the range outputs: sent with each pulse to the edge server */
  range_tank = tank;
}

void Z_halZ_pulse(struct Z_hal_instance_t* h, u32 charge_ticks, u32 buf, u32 capacity) {
  uint32_t t = now_ticks();
  ht_qemu_gate = 0;
  cap.entries = h->fw->w2c_memory.data + buf;
  cap.capacity = capacity;
  cap.total = 0;
  cap.shown = 0;
  cap.open_tick = t + charge_ticks;
  cap.live = 1;
  cap.stopped = 0;
  cap.faulted = 0;
  if (charge_ticks > 0) {
    ht_qemu_gate = 1;
    gate_open_at = cap.open_tick;
  }
  uint8_t req[16];
  req[0] = (uint8_t)range_drive;
  req[1] = (uint8_t)range_tank;
  req[2] = 0;
  req[3] = 0;
  put_u32(req + 4, charge_ticks);
  put_u32(req + 8, capacity);
  put_u32(req + 12, cap.open_tick);
  uint8_t count[4];
  int32_t n = link_exchange(LINK_PULSE, req, sizeof req, count, sizeof count, cap.entries, 4u * capacity);
  if (n < 4 || get_u32(count) > capacity || (uint32_t)n != 4u + 4u * get_u32(count)) {
    if (n >= 0) { /* intact but inconsistent: as bad as a corrupted one */
      link_down = 1;
      ht_qemu_link_faults++;
    }
    ht_qemu_gate = 0; /* no edges to show: the switch must not stay closed on a broken link */
    cap.faulted = 1;
    return;
  }
  cap.total = get_u32(count);
}

u32 Z_halZ_capture_count(struct Z_hal_instance_t* h) {
  (void)h;
  if (!cap.live) return 0;
  if (cap.faulted) return cap.capacity + 1u; /* beyond capacity: the firmware's capture fault */
  if (cap.stopped) return cap.shown;
  int32_t elapsed = (int32_t)(now_ticks() - cap.open_tick);
  while (cap.shown < cap.total && (int32_t)(get_u32(cap.entries + 4u * cap.shown) >> 1) <= elapsed) cap.shown++;
  return cap.shown;
}

void Z_halZ_stop(struct Z_hal_instance_t* h) {
  (void)h;
  gate_off_capture_stop();
}

void Z_halZ_uart_write(struct Z_hal_instance_t* h, u32 ptr, u32 len) {
  uart_put(USART1, h->fw->w2c_memory.data + ptr, len);
}

u32 Z_halZ_device_id(struct Z_hal_instance_t* h) {
  (void)h;
  return board_id;
}

u32 Z_halZ_capture_bits(struct Z_hal_instance_t* h) {
  (void)h;
  return 0; /* extended mode */
}

void ht_port_trap(wasm_rt_trap_t code) {
  (void)code;
  gate_off_capture_stop();
}

void qemu_port_fault_handler(void) {
  ht_qemu_gate = 0;
  ht_qemu_hard_fault = 1;
  for (;;) {
  }
}

/* ---- start-up and main loop ---- */
static void board_init(void) {
  RCC_APB2ENR |= RCC_APB2ENR_USART1;
  RCC_APB1ENR |= RCC_APB1ENR_USART2 | RCC_APB1ENR_TIM2;
  USART_BRR(USART1) = 0x2D9u; /* 115 200 Bd from the 84 MHz APB2 clock (QEMU ignores it) */
  USART_BRR(USART2) = 0x16Cu; /* 115 200 Bd from the 42 MHz APB1 clock */
  USART_CR1(USART1) = USART_CR1_UE | USART_CR1_TE | USART_CR1_RE | USART_CR1_RXNEIE;
  USART_CR1(USART2) = USART_CR1_UE | USART_CR1_TE | USART_CR1_RE | USART_CR1_RXNEIE;
  SYST_RVR = SYSTICK_PERIOD - 1u;
  SYST_CVR = 0;
  SYST_CSR = 7u; /* processor clock, interrupt, enable */
  NVIC_ISER(IRQ_TIM2 / 32u) = 1u << (IRQ_TIM2 % 32u);
  NVIC_ISER(IRQ_USART1 / 32u) = 1u << (IRQ_USART1 % 32u);
  NVIC_ISER(IRQ_USART2 / 32u) = 1u << (IRQ_USART2 % 32u);
}

static void start_firmware(void) {
  Z_henrytick_instantiate(&fw, &hal);
  ht_rt_require_memory(Z_henrytickZ_fw_memory_used(&fw));
  Z_henrytickZ_fw_init(&fw);
}

int main(void) {
  ht_qemu_gate = 0;
  board_init();
  link_hello();
  clock_sync(); /* the first sync: idle spells follow the host's clock from here on */
  wasm_rt_init();
  Z_henrytick_init_module();
  if (HT_RT_TRY()) {
    start_firmware();
    HT_RT_DONE();
  }
  int idled = 0, at_line_start = 1;
  for (;;) {
    if (!HT_RT_TRY()) {
      Z_henrytick_free(&fw);
      start_firmware();
      continue;
    }
    /* The host starts a line after an idle spell: catch up with its clock. Not within a line,
       whose bytes arrive one by one: the sync then reads the host's clock as the line begins. */
    if (idled && at_line_start && rx_tail != rx_head) clock_sync();
    idled = 0;
    while (rx_tail != rx_head && Z_henrytickZ_fw_rx(&fw, rx_ring[rx_tail])) {
      at_line_start = rx_ring[rx_tail] == '\n';
      rx_tail = (rx_tail + 1u) % RX_RING;
      USART_CR1(USART1) |= USART_CR1_RXNEIE;
    }
    uint32_t wait = Z_henrytickZ_fw_poll(&fw);
    int busy = Z_henrytickZ_fw_busy(&fw) != 0;
    HT_RT_DONE();
    if (rx_tail != rx_head) continue;
    if (busy || wait > 0) {
      sleep_until(now_ticks() + (wait > 0 ? wait : 1u), &rx_head, &rx_tail);
    } else {
      /* Idle: SysTick off, so that no timer is pending and QEMU stops emulated time until a host
         byte arrives (-icount sleep=off); clock_sync then adds the host time that passed. */
      uint32_t m = irq_save();
      if (rx_tail == rx_head) {
        SYST_CSR = 6u;
        wait_for_interrupt();
        SYST_CSR = 7u;
      }
      irq_restore(m);
      idled = 1;
    }
  }
}
