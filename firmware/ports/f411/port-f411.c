/*
 * Board port: the henrytick firmware (wasm2c build) on an STM32F411CE board of the common
 * "black pill" kind (128 KiB SRAM, 512 KiB flash, 25 MHz crystal), register-level.
 * docs/porting.md is the contract; docs/hardware.md has the wiring table and the bring-up
 * checklist for this board.
 *
 *   time     TIM2, 32 bits, free-running at 64 MHz from the crystal (clock.h); now() reads its
 *            counter and it is never reset, so now() and every capture share one time base.
 *   capture  the comparator on PA0 (TIM2_CH1): CH1 latches rising edges, CH2 (mapped on the same
 *            input, TI1) falling ones. DMA1 stream 5 channel 3 (TIM2_CH1) and stream 6 channel 3
 *            (TIM2_CH2), RM0383 Table 27, copy each raw capture register into its own circular
 *            ring; ../common/capture-merge.c merges the two rings into the firmware's entries on
 *            the streams' half/full-transfer interrupts, on every capture_count() and at stop().
 *   gate     PA2 (TIM2_CH3): forced active by pulse(), driven inactive by the channel's compare
 *            at the capture's zero (the switch opens by hardware, not by software), forced
 *            inactive at once by stop().
 *   ranges   PB12..PB15 drive resistors R1..R4, PB4..PB7 tank relays K1..K4, PB0 drive enable
 *            (docs/hardware.md, "Board wiring").
 *   host     USART1 (PA9 TX, PA10 RX) at 115 200 baud to a 3.3 V USB-serial adapter: receive by
 *            interrupt into a ring, transmit polled. USB CDC on PA11/PA12 is the next step (the
 *            clock tree already makes its 48 MHz).
 *   id       a 32-bit hash of the 96-bit unique device ID.
 *   safety   independent watchdog (about 1 s), refreshed by the main loop and while transmitting.
 *
 * Built with HT_F411_QEMU, the same file runs on QEMU's netduinoplus2 (STM32F405: same USART,
 * timer and DMA register blocks). QEMU programs no clock tree and models no DMA or input capture,
 * so that variant leaves the clocks as QEMU has them, gives a fixed device id, polls instead of
 * sleeping, and at start replays a recorded ring through the capture merge (merge-replay.c) and
 * prints the result on USART2: the shared merge code running on the emulated core.
 */
#include <stdint.h>

#include "henrytick-rt.h"
#include "henrytick.h"

#include "capture-merge.h"
#include "clock.h"
#include "stm32f4-regs.h"

#ifdef HT_F411_QEMU
#include "merge-replay.h"
#include "merge-table.h" /* generated: HT_TABLE_* (native-build.ts) */
#endif

/* ---- pins ---- */
#define PIN_CAPTURE 0u      /* PA0, TIM2_CH1, AF1 */
#define PIN_GATE 2u         /* PA2, TIM2_CH3, AF1 */
#define PIN_USART_TX 9u     /* PA9, USART1_TX, AF7 */
#define PIN_USART_RX 10u    /* PA10, USART1_RX, AF7 */
#define PIN_DRIVE_ENABLE 0u /* PB0 */
static const uint8_t drive_pins[4] = {12u, 13u, 14u, 15u}; /* PB12..PB15: R1..R4 */
static const uint8_t tank_pins[4] = {4u, 5u, 6u, 7u};      /* PB4..PB7: K1..K4 */
#define PIN_LED 13u         /* PC13, low = on */

/* ---- capture ---- */
/* Entries per DMA ring (a power of two): 512 x 4 B x 2 rings = 4 KiB. At the host's fastest ring
   (1.6 MHz, one edge per ring every 625 ns) half a ring is 160 us of edges. */
#define RING 512u
/* Latest an edge latched by the timer reaches its ring (DMA request to word in SRAM), with
   margin: a merge only releases edges this much older than the counter. */
#define DMA_LAG_TICKS 64u
/* Interrupt priorities (upper 4 bits): the host link's receive above the merge, so a long merge
   cannot overrun the UART; the sleep timer last. */
#define PRIO_USART 0x00u
#define PRIO_DMA 0x40u
#define PRIO_TIM2 0x80u

static volatile uint32_t ring_fall[RING], ring_rise[RING];
static cm_merge merge;
static volatile uint32_t halves_fall, halves_rise; /* half/full-transfer events since the capture opened */
static volatile int capturing;

/* ---- receive ring: filled by the USART interrupt, drained by the main loop ---- */
#define RX_RING 64u
static volatile uint8_t rx_ring[RX_RING];
static volatile uint32_t rx_head, rx_tail;
static volatile uint32_t rx_lost;

#ifdef HT_F411_HOSTSIM
/* Host test build (firmware/ports/host/f411-hostsim.c): no interrupts to mask. */
static inline void irq_off(void) {}
static inline void irq_on(void) {}
static inline uint32_t merge_lock(void) { return 0; }
static inline void merge_unlock(uint32_t old) { (void)old; }
#else
static inline void irq_off(void) { __asm volatile("cpsid i" ::: "memory"); }
static inline void irq_on(void) { __asm volatile("cpsie i" ::: "memory"); }
/* Masks the DMA and timer interrupts (priority PRIO_DMA and below), not the UART's. */
static inline uint32_t merge_lock(void) {
  uint32_t old;
  __asm volatile("mrs %0, basepri" : "=r"(old));
  __asm volatile("msr basepri, %0" ::"r"(PRIO_DMA) : "memory");
  return old;
}
static inline void merge_unlock(uint32_t old) { __asm volatile("msr basepri, %0" ::"r"(old) : "memory"); }
#endif

static void iwdg_refresh(void) { IWDG_KR = 0xAAAAu; }

static void gpio_mode(uint32_t port, uint32_t pin, uint32_t mode, uint32_t af) {
  GPIO_MODER(port) = (GPIO_MODER(port) & ~(3u << (2u * pin))) | (mode << (2u * pin));
  if (mode == 2u) {
    volatile uint32_t* afr = pin < 8u ? &GPIO_AFRL(port) : &GPIO_AFRH(port);
    uint32_t shift = 4u * (pin & 7u);
    *afr = (*afr & ~(15u << shift)) | (af << shift);
  }
}

static void pin_write(uint32_t port, uint32_t pin, int on) { GPIO_BSRR(port) = on ? 1u << pin : 1u << (pin + 16u); }

/* ---- gate ---- */
static void gate_force_off(void) { TIM2_CCMR2 = (TIM2_CCMR2 & ~TIM_OC3M_MASK) | TIM_OC3M_FORCE_INACTIVE; }

/* ---- capture hardware ---- */
static void dma_stream_setup(uint32_t stream, uint32_t periph, volatile uint32_t* ring) {
  DMA_SCR(stream) = 0;
  while (DMA_SCR(stream) & DMA_SCR_EN) {
  }
  DMA_SPAR(stream) = periph;
  DMA_SM0AR(stream) = (uint32_t)(uintptr_t)ring;
  DMA_SNDTR(stream) = RING;
  DMA_SFCR(stream) = 0; /* direct mode: each capture is written at once */
  DMA_SCR(stream) = DMA_SCR_CHSEL(3) | DMA_SCR_PL_VERY_HIGH | DMA_SCR_MSIZE_32 | DMA_SCR_PSIZE_32 | DMA_SCR_MINC |
                    DMA_SCR_CIRC | DMA_SCR_TCIE | DMA_SCR_HTIE | DMA_SCR_TEIE | DMA_SCR_DMEIE;
}

static uint32_t dma_events(uint32_t flags) {
  return ((flags & DMA_FLAG_HT) ? 1u : 0u) + ((flags & DMA_FLAG_TC) ? 1u : 0u);
}

/* Counts the streams' half/full-transfer events that have happened (and clears their flags), so
   the event counts are current whoever merges: an interrupt, capture_count or stop. Both flags of
   a stream at once (its interrupt held off past another half) count as two events; a stream a
   whole ring further ahead shows as a lapped ring in the merge. */
static void take_dma_events(void) {
  uint32_t hisr = DMA1_HISR;
  uint32_t f5 = (hisr >> DMA_HI_SHIFT_S5) & DMA_FLAGS_ALL;
  uint32_t f6 = (hisr >> DMA_HI_SHIFT_S6) & DMA_FLAGS_ALL;
  if (!(f5 | f6)) return;
  DMA1_HIFCR = (f5 << DMA_HI_SHIFT_S5) | (f6 << DMA_HI_SHIFT_S6);
  halves_rise += dma_events(f5);
  halves_fall += dma_events(f6);
  if ((f5 | f6) & (DMA_FLAG_TE | DMA_FLAG_DME)) cm_port_fault(&merge);
}

/* Reads the streams' positions and merges what has arrived. Runs with the DMA interrupts masked
   (in their handlers, or under merge_lock). */
static void merge_now(int final) {
  take_dma_events();
  if (TIM2_SR & (TIM_SR_CC1OF | TIM_SR_CC2OF)) {
    /* A capture register latched again before the DMA had read it: an edge is lost. */
    TIM2_SR = ~(TIM_SR_CC1OF | TIM_SR_CC2OF);
    cm_port_fault(&merge);
  }
  uint32_t horizon = TIM2_CNT - DMA_LAG_TICKS;
  uint32_t rise = cm_dma_written(RING, halves_rise, DMA_SNDTR(5));
  uint32_t fall = cm_dma_written(RING, halves_fall, DMA_SNDTR(6));
  cm_merge_step(&merge, fall, rise, horizon, final);
}

static void dma_irq(void) {
  if (capturing) {
    merge_now(0); /* takes both streams' events */
  } else {
    DMA1_HIFCR = (DMA_FLAGS_ALL << DMA_HI_SHIFT_S5) | (DMA_FLAGS_ALL << DMA_HI_SHIFT_S6);
  }
}

void DMA1_Stream5_IRQHandler(void) { dma_irq(); }
void DMA1_Stream6_IRQHandler(void) { dma_irq(); }

/* Stops the capture hardware; with `merge_rest`, takes in what it wrote last. */
static void capture_off(int merge_rest) {
  TIM2_DIER &= ~(TIM_DIER_CC1DE | TIM_DIER_CC2DE);
  DMA_SCR(5) &= ~DMA_SCR_EN;
  DMA_SCR(6) &= ~DMA_SCR_EN;
  /* A stream finishes its current transfer before EN reads 0. */
  for (uint32_t i = 0; i < 1000u && (DMA_SCR(5) & DMA_SCR_EN || DMA_SCR(6) & DMA_SCR_EN); i++) {
  }
  if (!capturing) return;
  uint32_t lock = merge_lock();
  if (merge_rest) merge_now(1);
  DMA1_HIFCR = (DMA_FLAGS_ALL << DMA_HI_SHIFT_S5) | (DMA_FLAGS_ALL << DMA_HI_SHIFT_S6);
  capturing = 0;
  merge_unlock(lock);
}

/* ---- the HAL: the firmware's imports, as wasm2c names them ---- */
struct Z_hal_instance_t {
  Z_henrytick_instance_t* fw;
};

static Z_henrytick_instance_t fw;
static struct Z_hal_instance_t hal = {&fw};

u32 Z_halZ_now(struct Z_hal_instance_t* h) {
  (void)h;
  return TIM2_CNT;
}

void Z_halZ_select(struct Z_hal_instance_t* h, u32 drive, u32 tank) {
  (void)h;
  /* Break before make: no two resistors or tanks are ever connected together. */
  for (uint32_t i = 0; i < 4u; i++) {
    pin_write(GPIOB, drive_pins[i], 0);
    pin_write(GPIOB, tank_pins[i], 0);
  }
  pin_write(GPIOB, drive_pins[drive & 3u], 1);
  pin_write(GPIOB, tank_pins[tank & 3u], 1);
  pin_write(GPIOB, PIN_DRIVE_ENABLE, 1); /* the drive rail is live for this measurement */
}

void Z_halZ_pulse(struct Z_hal_instance_t* h, u32 charge_ticks, u32 buf, u32 capacity) {
  volatile int32_t* out = (volatile int32_t*)(void*)(h->fw->w2c_memory.data + buf);
  capture_off(0); /* replaces any capture in progress */
  irq_off();
  dma_stream_setup(5, TIM2_CCR1_ADDR, ring_rise);
  dma_stream_setup(6, TIM2_CCR2_ADDR, ring_fall);
  DMA1_HIFCR = (DMA_FLAGS_ALL << DMA_HI_SHIFT_S5) | (DMA_FLAGS_ALL << DMA_HI_SHIFT_S6);
  halves_rise = 0;
  halves_fall = 0;
  TIM2_SR = ~(TIM_SR_CC1OF | TIM_SR_CC2OF | 6u); /* stale captures and over-capture flags */
  DMA_SCR(5) |= DMA_SCR_EN;
  DMA_SCR(6) |= DMA_SCR_EN;
  TIM2_DIER |= TIM_DIER_CC1DE | TIM_DIER_CC2DE;
  uint32_t zero;
  int missed = 0;
  if (charge_ticks > 0) {
    /* Close the switch now; the compare opens it charge_ticks later, by hardware. The on-time is
       short by the few ticks between reading the counter and the force taking effect. */
    uint32_t t0 = TIM2_CNT;
    zero = t0 + charge_ticks;
    TIM2_CCR3 = zero;
    TIM2_CCMR2 = (TIM2_CCMR2 & ~TIM_OC3M_MASK) | TIM_OC3M_FORCE_ACTIVE;
    TIM2_CCMR2 = (TIM2_CCMR2 & ~TIM_OC3M_MASK) | TIM_OC3M_INACTIVE_ON_MATCH;
    /* A compare already behind the counter would leave the switch closed for a whole wrap. */
    if (TIM2_CNT - t0 >= charge_ticks) {
      gate_force_off();
      missed = 1;
    }
  } else {
    zero = TIM2_CNT; /* listening with the switch open: the zero is now */
  }
  cm_open(&merge, zero, out, capacity, ring_fall, ring_rise, RING);
  if (missed) cm_port_fault(&merge);
  capturing = 1;
  irq_on();
}

u32 Z_halZ_capture_count(struct Z_hal_instance_t* h) {
  (void)h;
  uint32_t lock = merge_lock();
  if (capturing) merge_now(0);
  uint32_t n = merge.count;
  merge_unlock(lock);
  return n;
}

static void board_stop(int merge_rest) {
  gate_force_off(); /* first: the switch opens now */
  pin_write(GPIOB, PIN_DRIVE_ENABLE, 0);
  capture_off(merge_rest);
}

void Z_halZ_stop(struct Z_hal_instance_t* h) {
  (void)h;
  board_stop(1);
}

static void usart_send(uint32_t usart, const uint8_t* p, uint32_t n) {
  for (uint32_t i = 0; i < n; i++) {
    while (!(USART_SR(usart) & USART_SR_TXE)) iwdg_refresh(); /* a long stream is progress */
    USART_DR(usart) = p[i];
  }
}

void Z_halZ_uart_write(struct Z_hal_instance_t* h, u32 ptr, u32 len) {
  usart_send(USART1, h->fw->w2c_memory.data + ptr, len);
}

u32 Z_halZ_device_id(struct Z_hal_instance_t* h) {
  (void)h;
#if defined(HT_F411_QEMU) || defined(HT_F411_HOSTSIM)
  /* QEMU's model has no unique-ID area; a fixed id stands in. */
  static const uint32_t uid[3] = {0x00454d55u, 0x51454d55u, 0x31313446u};
#else
  const volatile uint32_t* uid = (const volatile uint32_t*)(uintptr_t)UID_BASE;
#endif
  uint32_t hash = 2166136261u; /* FNV-1a over the 12 bytes */
  for (uint32_t w = 0; w < 3u; w++) {
    uint32_t v = uid[w];
    for (uint32_t b = 0; b < 4u; b++) {
      hash ^= (v >> (8u * b)) & 0xffu;
      hash *= 16777619u;
    }
  }
  return hash;
}

u32 Z_halZ_capture_bits(struct Z_hal_instance_t* h) {
  (void)h;
  return 0; /* extended mode: the merge writes ticks since the zero << 1 | level */
}

/* A trap means a firmware bug: switch open and capture off first (no merge: the instance is dead). */
void ht_port_trap(wasm_rt_trap_t code) {
  (void)code;
  board_stop(0);
}

/* ---- interrupts ---- */
void USART1_IRQHandler(void) {
  uint32_t sr = USART_SR(USART1);
  if (sr & (USART_SR_RXNE | USART_SR_ORE | USART_SR_FE | USART_SR_NF | USART_SR_PE)) {
    uint8_t b = (uint8_t)USART_DR(USART1); /* reading SR then DR clears the error flags */
    if (sr & (USART_SR_ORE | USART_SR_FE | USART_SR_NF | USART_SR_PE)) {
      rx_lost++; /* a byte lost or garbled: the main loop reports it with fw_rx_overrun() */
      return;
    }
    uint32_t next = (rx_head + 1u) % RX_RING;
    if (next == rx_tail) {
      rx_lost++;
      return;
    }
    rx_ring[rx_head] = b;
    rx_head = next;
  }
}

void TIM2_IRQHandler(void) {
  TIM2_SR = ~TIM_SR_CC4IF; /* the sleep deadline: waking was the point */
  TIM2_DIER &= ~TIM_DIER_CC4IE;
}

/* ---- board set-up ---- */
/* Longest sleep, so the watchdog is refreshed well inside its timeout. */
#define MAX_SLEEP_TICKS (100u * 64000u)

static int clock_init(void) {
#if defined(HT_F411_QEMU) || defined(HT_F411_HOSTSIM)
  return 1; /* QEMU has no clock tree to program */
#else
  RCC_CR |= RCC_CR_HSEON;
  uint32_t i = 0;
  while (!(RCC_CR & RCC_CR_HSERDY)) {
    if (++i > 2000000u) return 0; /* no crystal: refuse to run on a wrong time base */
  }
  FLASH_ACR = F411_FLASH_WAIT_STATES | FLASH_ACR_PRFTEN | FLASH_ACR_ICEN | FLASH_ACR_DCEN;
  RCC_PLLCFGR = F411_PLL_M | (F411_PLL_N << 6) | (((F411_PLL_P / 2u) - 1u) << 16) | RCC_PLLCFGR_SRC_HSE |
                (F411_PLL_Q << 24);
  RCC_CR |= RCC_CR_PLLON;
  while (!(RCC_CR & RCC_CR_PLLRDY)) {
  }
  /* AHB /1, APB1 /2 (PPRE1 100), APB2 /1, then switch SYSCLK to the PLL. */
  RCC_CFGR = (4u << 10) | RCC_CFGR_SW_PLL;
  while ((RCC_CFGR & RCC_CFGR_SWS_MASK) != RCC_CFGR_SWS_PLL) {
  }
  return 1;
#endif
}

static void board_init(void) {
  RCC_AHB1ENR |= RCC_AHB1ENR_GPIOA | RCC_AHB1ENR_GPIOB | RCC_AHB1ENR_GPIOC | RCC_AHB1ENR_DMA1;
  RCC_APB1ENR |= RCC_APB1ENR_TIM2 | RCC_APB1ENR_USART2;
  RCC_APB2ENR |= RCC_APB2ENR_USART1;
  (void)RCC_APB2ENR; /* the enables take effect before the first access */

  /* Range outputs low (nothing selected, drive rail off), push-pull. */
  GPIO_BSRR(GPIOB) = (1u << (PIN_DRIVE_ENABLE + 16u));
  gpio_mode(GPIOB, PIN_DRIVE_ENABLE, 1u, 0);
  for (uint32_t i = 0; i < 4u; i++) {
    pin_write(GPIOB, drive_pins[i], 0);
    pin_write(GPIOB, tank_pins[i], 0);
    gpio_mode(GPIOB, drive_pins[i], 1u, 0);
    gpio_mode(GPIOB, tank_pins[i], 1u, 0);
  }
  pin_write(GPIOC, PIN_LED, 1);
  gpio_mode(GPIOC, PIN_LED, 1u, 0);

  /* TIM2: free-running 32-bit counter at 64 MHz. CH3 forced inactive before its pin is handed to
     the timer, so the gate (held low by its pull-down until now) never sees a high. */
  TIM2_PSC = 0;
  TIM2_ARR = 0xFFFFFFFFu;
  TIM2_CCMR2 = TIM_OC3M_FORCE_INACTIVE; /* CH3 output compare; CH4 frozen (sleep deadline) */
  TIM2_CCMR1 = TIM_CCMR1_CC1S_TI1 | TIM_CCMR1_CC2S_TI1; /* no input filter: exact edge times */
  TIM2_CCER = TIM_CCER_CC1E | TIM_CCER_CC2E | TIM_CCER_CC2P | TIM_CCER_CC3E; /* CH1 rising, CH2 falling */
  TIM2_EGR = TIM_EGR_UG;
  TIM2_SR = 0;
  TIM2_CR1 = TIM_CR1_CEN;
  /* Fast edges on the gate (output speed "fast"): its on-time is set by the compare, not the slew. */
  GPIO_OSPEEDR(GPIOA) = (GPIO_OSPEEDR(GPIOA) & ~(3u << (2u * PIN_GATE))) | (2u << (2u * PIN_GATE));
  gpio_mode(GPIOA, PIN_GATE, 2u, 1u);
  gpio_mode(GPIOA, PIN_CAPTURE, 2u, 1u);

  /* USART1: 8N1, 115 200 baud on the 64 MHz APB2. */
  GPIO_PUPDR(GPIOA) = (GPIO_PUPDR(GPIOA) & ~(3u << (2u * PIN_USART_RX))) | (1u << (2u * PIN_USART_RX));
  gpio_mode(GPIOA, PIN_USART_TX, 2u, 7u);
  gpio_mode(GPIOA, PIN_USART_RX, 2u, 7u);
  USART_BRR(USART1) = F411_USART1_BRR;
  USART_CR1(USART1) = USART_CR1_UE | USART_CR1_TE | USART_CR1_RE | USART_CR1_RXNEIE;

  NVIC_IPR_BYTE(IRQ_USART1) = PRIO_USART;
  NVIC_IPR_BYTE(IRQ_DMA1_STREAM5) = PRIO_DMA;
  NVIC_IPR_BYTE(IRQ_DMA1_STREAM6) = PRIO_DMA;
  NVIC_IPR_BYTE(IRQ_TIM2) = PRIO_TIM2;
  NVIC_ISER(IRQ_USART1 / 32u) = 1u << (IRQ_USART1 % 32u);
  NVIC_ISER(IRQ_DMA1_STREAM5 / 32u) = 1u << (IRQ_DMA1_STREAM5 % 32u);
  NVIC_ISER(IRQ_DMA1_STREAM6 / 32u) = 1u << (IRQ_DMA1_STREAM6 % 32u);
  NVIC_ISER(IRQ_TIM2 / 32u) = 1u << (IRQ_TIM2 % 32u);

  /* Independent watchdog: LSI (about 32 kHz) / 32, reload 1000: about 1 s. */
  IWDG_KR = 0xCCCCu;
  IWDG_KR = 0x5555u;
  IWDG_PR = 3u;
  IWDG_RLR = 1000u;
  iwdg_refresh();
}

/* Sleeps until `deadline` (a TIM2 value) or the next interrupt, whichever is first. */
static void sleep_until(uint32_t deadline) {
#if defined(HT_F411_QEMU) || defined(HT_F411_HOSTSIM)
  (void)deadline; /* QEMU's timer raises no compare interrupt to wake on: poll */
#else
  irq_off();
  if (rx_tail == rx_head) {
    TIM2_CCR4 = deadline;
    TIM2_SR = ~TIM_SR_CC4IF;
    TIM2_DIER |= TIM_DIER_CC4IE;
    /* A deadline already passed must not wait for the counter to come round again. */
    if ((int32_t)(deadline - TIM2_CNT) > 0) __asm volatile("wfi");
    TIM2_DIER &= ~TIM_DIER_CC4IE;
  }
  irq_on(); /* a pending interrupt runs here */
#endif
}

static void start_firmware(void) {
  Z_henrytick_instantiate(&fw, &hal);
  /* The linear memory's backing must hold what the firmware allocated: traps (switch open) if not. */
  ht_rt_require_memory(Z_henrytickZ_fw_memory_used(&fw));
  Z_henrytickZ_fw_init(&fw);
}

#ifdef HT_F411_QEMU
static void print_u32(uint32_t v) {
  char d[10];
  uint32_t n = 0;
  do {
    d[n++] = (char)('0' + v % 10u);
    v /= 10u;
  } while (v);
  while (n) usart_send(USART2, (const uint8_t*)&d[--n], 1);
}

/* The shared merge on the emulated core: the recorded ring through the rings and interrupts as a
   board would drive them; the line "merge COUNT FAULT CHECKSUM SYSTICKS" goes to USART2
   (SYSTICKS: SysTick counts the merge took; with -icount, a measure of its instructions). */
static void merge_self_check(void) {
  static uint32_t rings[2 * HT_TABLE_RING];
  static int32_t out[HT_TABLE_CAPACITY];
  static cm_merge m;
  USART_BRR(USART2) = 0x116u;
  USART_CR1(USART2) = USART_CR1_UE | USART_CR1_TE;
  /* SysTick on the core clock counts emulated time: under -icount, executed instructions. The
     replay without room for entries costs the emulated DMA alone; the difference is the merge. */
  SYST_RVR = 0xFFFFFFu;
  SYST_CVR = 0;
  SYST_CSR = 5u;
  uint32_t t0 = SYST_CVR;
  cm_replay(&m, ht_table_edges, HT_TABLE_EDGES, HT_TABLE_ZERO, rings, HT_TABLE_RING, out, 0, HT_TABLE_POLL_EVERY);
  uint32_t t1 = SYST_CVR;
  uint32_t n = cm_replay(&m, ht_table_edges, HT_TABLE_EDGES, HT_TABLE_ZERO, rings, HT_TABLE_RING, out,
                         HT_TABLE_CAPACITY, HT_TABLE_POLL_EVERY);
  uint32_t t2 = SYST_CVR;
  SYST_CSR = 0;
  uint32_t figures[4] = {n, m.fault, cm_checksum(out, n), ((t1 - t2) - (t0 - t1)) & 0xFFFFFFu};
  usart_send(USART2, (const uint8_t*)"merge", 5);
  for (uint32_t i = 0; i < 4u; i++) {
    usart_send(USART2, (const uint8_t*)" ", 1);
    print_u32(figures[i]);
  }
  usart_send(USART2, (const uint8_t*)"\n", 1);
}
#endif

int main(void) {
  gate_force_off(); /* before anything else: the switch must start open (TIM2 may be unclocked: harmless) */
  if (!clock_init()) {
    /* No crystal: a wrong time base would read every part wrong. Stay off, blink the LED fast. */
    RCC_AHB1ENR |= RCC_AHB1ENR_GPIOC;
    gpio_mode(GPIOC, PIN_LED, 1u, 0);
    for (uint32_t i = 0;; i++) {
      pin_write(GPIOC, PIN_LED, (i >> 16) & 1u);
    }
  }
  board_init();
#ifdef HT_F411_QEMU
  merge_self_check();
#endif
  wasm_rt_init();
  Z_henrytick_init_module();
  if (HT_RT_TRY()) {
    start_firmware();
    HT_RT_DONE();
  }
  for (;;) {
    iwdg_refresh();
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
    HT_RT_DONE();
    pin_write(GPIOC, PIN_LED, !capturing); /* LED on while capturing */
    if (rx_tail != rx_head) continue; /* more input waiting: poll again at once */
    if (wait == 0 || wait > MAX_SLEEP_TICKS) wait = MAX_SLEEP_TICKS;
    sleep_until(TIM2_CNT + wait);
  }
}
