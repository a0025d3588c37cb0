/*
 * Host driver for the capture merge (firmware/ports/common/capture-merge.c): plays a script of
 * DMA writes, interrupts and merge steps, as firmware/test/capture-merge.test.ts writes them,
 * and prints what the merge produced.
 *
 * Usage: capture-merge-check SCRIPT. Lines:
 *   open ZERO RING_SIZE CAPACITY   start a capture (rings and totals cleared)
 *   edge RAW LEVEL                 the DMA stream of LEVEL (0 falling, 1 rising) writes RAW
 *   irq                            the streams' interrupts count the half/full events so far
 *   step HORIZON                   merge step; prints "n COUNT"
 *   final                          final merge step; prints "n COUNT"
 *   portfault                      the port reports a fault
 *   dma RING_SIZE HALVES REMAINING prints "dma WRITTEN" (cm_dma_written)
 *   replay ZERO RING_SIZE CAPACITY POLL_EVERY N E1 .. EN
 *                                  cm_replay; prints "replay COUNT FAULT CHECKSUM"
 *   end                            prints "end COUNT FAULT BEFORE_ZERO" and "entries E1 E2 .."
 */
#define _POSIX_C_SOURCE 200809L
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "capture-merge.h"
#include "merge-replay.h"

#define MAX_RING 65536u
#define MAX_OUT 65536u

static uint32_t rings[2][MAX_RING];
static uint32_t totals[2], halves[2];
static int32_t out[MAX_OUT];
static cm_merge m;
static uint32_t ring_size = 2, capacity = 0;

static uint32_t written(int s) {
  return cm_dma_written(ring_size, halves[s], ring_size - totals[s] % ring_size);
}

static unsigned long num(char** save) {
  char* t = strtok_r(NULL, " \t\n", save);
  if (!t) {
    fprintf(stderr, "missing number\n");
    exit(2);
  }
  return strtoul(t, NULL, 0);
}

int main(int argc, char** argv) {
  if (argc != 2) {
    fprintf(stderr, "usage: capture-merge-check SCRIPT\n");
    return 2;
  }
  FILE* f = fopen(argv[1], "r");
  if (!f) {
    perror(argv[1]);
    return 2;
  }
  char* line = NULL;
  size_t cap = 0;
  while (getline(&line, &cap, f) > 0) {
    char* save;
    char* cmd = strtok_r(line, " \t\n", &save);
    if (!cmd) continue;
    if (!strcmp(cmd, "open")) {
      uint32_t zero = (uint32_t)num(&save);
      ring_size = (uint32_t)num(&save);
      capacity = (uint32_t)num(&save);
      if (ring_size > MAX_RING || capacity > MAX_OUT || ring_size < 2 || (ring_size & (ring_size - 1u))) return 2;
      memset(totals, 0, sizeof totals);
      memset(halves, 0, sizeof halves);
      memset(out, 0, sizeof out);
      cm_open(&m, zero, out, capacity, rings[0], rings[1], ring_size);
    } else if (!strcmp(cmd, "edge")) {
      uint32_t raw = (uint32_t)num(&save);
      int s = (int)num(&save) & 1;
      rings[s][totals[s] % ring_size] = raw;
      totals[s]++;
    } else if (!strcmp(cmd, "irq")) {
      for (int s = 0; s < 2; s++) halves[s] = totals[s] / (ring_size / 2u);
    } else if (!strcmp(cmd, "step") || !strcmp(cmd, "final")) {
      int final = !strcmp(cmd, "final");
      uint32_t horizon = final ? 0 : (uint32_t)num(&save);
      printf("n %u\n", cm_merge_step(&m, written(0), written(1), horizon, final));
    } else if (!strcmp(cmd, "portfault")) {
      cm_port_fault(&m);
    } else if (!strcmp(cmd, "dma")) {
      uint32_t size = (uint32_t)num(&save);
      uint32_t h = (uint32_t)num(&save);
      uint32_t rem = (uint32_t)num(&save);
      printf("dma %u\n", cm_dma_written(size, h, rem));
    } else if (!strcmp(cmd, "replay")) {
      uint32_t zero = (uint32_t)num(&save);
      uint32_t size = (uint32_t)num(&save);
      uint32_t capy = (uint32_t)num(&save);
      uint32_t poll = (uint32_t)num(&save);
      uint32_t n = (uint32_t)num(&save);
      uint32_t* edges = malloc(sizeof(uint32_t) * (n ? n : 1));
      uint32_t* rr = malloc(sizeof(uint32_t) * 2u * size);
      int32_t* o = calloc(capy ? capy : 1, sizeof(int32_t));
      cm_merge rm;
      for (uint32_t i = 0; i < n; i++) edges[i] = (uint32_t)num(&save);
      uint32_t count = cm_replay(&rm, edges, n, zero, rr, size, o, capy, poll);
      printf("replay %u %u %u\n", count, rm.fault, cm_checksum(o, count));
      free(edges);
      free(rr);
      free(o);
    } else if (!strcmp(cmd, "end")) {
      printf("end %u %u %u\nentries", m.count, m.fault, m.before_zero);
      for (uint32_t i = 0; i < m.count; i++) printf(" %u", (uint32_t)out[i]);
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
