/*
 * Host test build of the STM32F411CE board port (firmware/ports/f411/port-f411.c, compiled in
 * here with HT_F411_HOSTSIM): its registers are words in a model, its DMA streams are played by a
 * script, so the port's own capture path — arming, half/full-transfer interrupts, capture_count,
 * stop — runs on the host against the same merge as on the chip.
 *
 * The model stores what is written, except that a write to the DMA's HIFCR clears those HISR
 * flags (TIM2's status register simply keeps the value written: the port only writes it with
 * the bits it means to clear at 0). It models the DMA's count-down register and flags, nothing
 * of the silicon's timing.
 *
 * Usage: f411-hostsim SCRIPT. Lines:
 *   cnt V                   TIM2's counter reads V
 *   pulse CHARGE CAPACITY   the firmware calls pulse(); prints "pulse OC3M CCR3 EN5 EN6 DE CHSEL5 CHSEL6 PAR5 PAR6 NDTR5 NDTR6"
 *   cap LEVEL RAW           a capture: its DMA stream (5 rising, 6 falling) writes RAW
 *   hold / release          interrupts held off / run now for every flag set
 *   ovr                     the timer's over-capture flag is set
 *   count                   the firmware calls capture_count(); prints "count N"
 *   stop                    the firmware calls stop(); prints "stop OC3M DRIVE_ENABLE_WRITE COUNT"
 *   select D T              the firmware calls select(); prints the BSRR writes
 *   entries                 prints "entries E1 E2 .." (unsigned)
 */
#define main f411_main
#include "../f411/port-f411.c"
#undef main

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static uint32_t periph[0x30000u / 4u]; /* 0x40000000.. */
static uint32_t core[0x1000u / 4u];    /* 0xE000E000.. */
static uint32_t bsrr_log[32];
static uint32_t bsrr_n;
static uint32_t scratch;

volatile uint32_t* ht_sim_reg(uint32_t addr) {
  /* HIFCR is write-only: a value written there clears its HISR flags before the next access. */
  uint32_t* hifcr = &periph[(DMA1 + 0x0Cu - 0x40000000u) / 4u];
  if (*hifcr) {
    periph[(DMA1 + 0x04u - 0x40000000u) / 4u] &= ~*hifcr;
    *hifcr = 0;
  }
  if (addr >= 0x40000000u && addr < 0x40030000u) {
    if (addr == GPIOB + 0x18u && bsrr_n < 32u) return &bsrr_log[bsrr_n++];
    return &periph[(addr - 0x40000000u) / 4u];
  }
  if (addr >= 0xE000E000u && addr < 0xE000F000u) return &core[(addr - 0xE000E000u) / 4u];
  return &scratch;
}

static uint8_t memory[65536];
static int held;

static uint32_t shift_of(int stream) { return stream == 5 ? DMA_HI_SHIFT_S5 : DMA_HI_SHIFT_S6; }

static void run_irqs(void) {
  if (held) return;
  for (int stream = 5; stream <= 6; stream++) {
    if ((*ht_sim_reg(DMA1 + 0x04u) >> shift_of(stream)) & DMA_FLAGS_ALL) {
      if (stream == 5) DMA1_Stream5_IRQHandler();
      else DMA1_Stream6_IRQHandler();
    }
  }
}

static unsigned long num(char** save) {
  char* t = strtok_r(NULL, " \t\n", save);
  if (!t) exit(2);
  return strtoul(t, NULL, 0);
}

int main(int argc, char** argv) {
  if (argc != 2) return 2;
  FILE* f = fopen(argv[1], "r");
  if (!f) return 2;
  fw.w2c_memory.data = memory;
  fw.w2c_memory.size = sizeof memory;
  board_init();
  char* line = NULL;
  size_t cap = 0;
  while (getline(&line, &cap, f) > 0) {
    char* save;
    char* cmd = strtok_r(line, " \t\n", &save);
    if (!cmd) continue;
    if (!strcmp(cmd, "cnt")) {
      TIM2_CNT = (uint32_t)num(&save);
    } else if (!strcmp(cmd, "pulse")) {
      uint32_t charge = (uint32_t)num(&save), capacity = (uint32_t)num(&save);
      Z_halZ_pulse(&hal, charge, 0, capacity);
      printf("pulse %u %u %u %u %u %u %u %u %u %u %u\n", (TIM2_CCMR2 & TIM_OC3M_MASK) >> 4, TIM2_CCR3, DMA_SCR(5) & 1u,
             DMA_SCR(6) & 1u, (TIM2_DIER & (TIM_DIER_CC1DE | TIM_DIER_CC2DE)) == (TIM_DIER_CC1DE | TIM_DIER_CC2DE),
             DMA_SCR(5) >> 25, DMA_SCR(6) >> 25, DMA_SPAR(5), DMA_SPAR(6), DMA_SNDTR(5), DMA_SNDTR(6));
    } else if (!strcmp(cmd, "cap")) {
      int level = (int)num(&save) & 1;
      uint32_t raw = (uint32_t)num(&save);
      int stream = level ? 5 : 6;
      if (!(DMA_SCR(stream) & DMA_SCR_EN)) continue; /* stream off: the capture goes nowhere */
      volatile uint32_t* ring = level ? ring_rise : ring_fall;
      uint32_t ndtr = DMA_SNDTR(stream);
      ring[RING - ndtr] = raw;
      ndtr--;
      if (ndtr == RING / 2u) *ht_sim_reg(DMA1 + 0x04u) |= DMA_FLAG_HT << shift_of(stream);
      if (ndtr == 0) {
        *ht_sim_reg(DMA1 + 0x04u) |= DMA_FLAG_TC << shift_of(stream);
        ndtr = RING; /* circular: reload */
      }
      DMA_SNDTR(stream) = ndtr;
      run_irqs();
    } else if (!strcmp(cmd, "hold")) {
      held = 1;
    } else if (!strcmp(cmd, "release")) {
      held = 0;
      run_irqs();
    } else if (!strcmp(cmd, "ovr")) {
      TIM2_SR |= TIM_SR_CC1OF;
    } else if (!strcmp(cmd, "count")) {
      printf("count %u\n", Z_halZ_capture_count(&hal));
    } else if (!strcmp(cmd, "stop")) {
      bsrr_n = 0;
      Z_halZ_stop(&hal);
      printf("stop %u %u %u\n", (TIM2_CCMR2 & TIM_OC3M_MASK) >> 4, bsrr_n ? bsrr_log[0] : 0, Z_halZ_capture_count(&hal));
    } else if (!strcmp(cmd, "select")) {
      uint32_t d = (uint32_t)num(&save), t = (uint32_t)num(&save);
      bsrr_n = 0;
      Z_halZ_select(&hal, d, t);
      printf("select");
      for (uint32_t i = 0; i < bsrr_n; i++) printf(" %u", bsrr_log[i]);
      printf("\n");
    } else if (!strcmp(cmd, "entries")) {
      printf("entries");
      for (uint32_t i = 0; i < merge.count; i++) printf(" %u", (uint32_t)((volatile int32_t*)(void*)memory)[i]);
      printf("\n");
    } else {
      fprintf(stderr, "unknown command %s\n", cmd);
      return 2;
    }
  }
  free(line);
  fclose(f);
  return 0;
}
