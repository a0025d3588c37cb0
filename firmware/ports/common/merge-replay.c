/* Capture-merge replay (see merge-replay.h). */
#include "merge-replay.h"

typedef struct {
  uint32_t total;  /* entries the "DMA" has written */
  uint32_t halves; /* half/full-transfer events the "interrupt" has counted */
} replay_stream;

static void step(cm_merge* m, replay_stream* st, uint32_t ring_size, uint32_t horizon, int final) {
  uint32_t w[2];
  for (int s = 0; s < 2; s++) {
    /* What a port reads: its event count and the stream's count-down register. */
    w[s] = cm_dma_written(ring_size, st[s].halves, ring_size - st[s].total % ring_size);
  }
  cm_merge_step(m, w[0], w[1], horizon, final);
}

uint32_t cm_replay(cm_merge* m, const uint32_t* edges, uint32_t n, uint32_t zero, uint32_t* rings, uint32_t ring_size,
                   int32_t* out, uint32_t capacity, uint32_t poll_every) {
  replay_stream st[2] = {{0, 0}, {0, 0}};
  uint32_t* ring[2] = {rings, rings + ring_size};
  cm_open(m, zero, out, capacity, ring[0], ring[1], ring_size);
  for (uint32_t i = 0; i < n; i++) {
    uint32_t level = edges[i] & 1u;
    uint32_t raw = zero + (edges[i] >> 1);
    replay_stream* s = &st[level];
    ring[level][s->total % ring_size] = raw;
    s->total++;
    if (s->total % (ring_size / 2u) == 0) {
      s->halves++; /* the stream's half- or full-transfer interrupt */
      step(m, st, ring_size, raw + 1u, 0);
    } else if (poll_every && (i + 1u) % poll_every == 0) {
      step(m, st, ring_size, raw + 1u, 0);
    }
  }
  step(m, st, ring_size, 0, 1);
  return m->count;
}

uint32_t cm_checksum(const int32_t* words, uint32_t n) {
  uint32_t h = 2166136261u;
  for (uint32_t i = 0; i < n; i++) {
    uint32_t w = (uint32_t)words[i];
    for (int b = 0; b < 4; b++) {
      h ^= (w >> (8 * b)) & 0xffu;
      h *= 16777619u;
    }
  }
  return h;
}
