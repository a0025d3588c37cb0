/*
 * Capture merge (see capture-merge.h for the contract).
 *
 * Order: the comparator is one signal, so its edges alternate, and each ring is in time order by
 * itself. The next entry is the earlier of the two rings' heads. A head may be passed on only
 * when nothing earlier can still arrive on the other ring: when the other ring has a later head,
 * when the head is older than the horizon (every edge before the horizon is already in the
 * rings), or when the capture has ended. Equal ticks (two edges inside one tick) go out in the
 * order that alternates with the entry before.
 *
 * Time: ticks = raw - zero in 32-bit unsigned arithmetic, so the counter may wrap (every 67 s at
 * 64 MHz) anywhere inside a capture; an edge before the zero shows up as a negative difference
 * (read as signed) and is refused, like one at or beyond 2^30.
 */
#include "capture-merge.h"

void cm_open(cm_merge* m, uint32_t zero, volatile int32_t* out, uint32_t capacity,
             const volatile uint32_t* ring_fall, const volatile uint32_t* ring_rise, uint32_t ring_size) {
  m->stream[0].ring = ring_fall;
  m->stream[0].read = 0;
  m->stream[1].ring = ring_rise;
  m->stream[1].read = 0;
  m->ring_size = ring_size;
  m->zero = zero;
  m->out = out;
  m->capacity = capacity;
  m->count = 0;
  m->last_tick = 0;
  m->last_level = -1;
  m->fault = 0;
}

static void fail(cm_merge* m, uint32_t why) {
  if (m->fault == 0 && m->count < m->capacity) {
    m->out[m->count] = (int32_t)(CM_FAULT_ENTRY | why);
    m->count++;
  }
  m->fault |= why;
}

void cm_port_fault(cm_merge* m) {
  fail(m, CM_FAULT_PORT);
}

uint32_t cm_dma_written(uint32_t ring_size, uint32_t halves, uint32_t remaining) {
  uint32_t base = halves * (ring_size / 2u);
  uint32_t pos = (ring_size - remaining % ring_size) % ring_size; /* next index the DMA writes */
  return base + (pos + ring_size - base % ring_size) % ring_size;
}

uint32_t cm_merge_step(cm_merge* m, uint32_t written_fall, uint32_t written_rise, uint32_t horizon, int final) {
  const uint32_t written[2] = {written_fall, written_rise};
  /* A full buffer ends the capture for the firmware: what follows is left unread, not a fault. */
  if (m->fault || m->count >= m->capacity) return m->count;
  for (int s = 0; s < 2; s++) {
    /* More unread than the ring holds: the oldest unread entries have been overwritten. */
    if (written[s] - m->stream[s].read > m->ring_size) {
      fail(m, CM_FAULT_LAPPED);
      return m->count;
    }
  }
  /* Edges latched before the horizon are all in; a horizon before the zero lets nothing out. */
  int32_t safe = (int32_t)(horizon - m->zero);
  while (m->count < m->capacity) {
    int have[2];
    int32_t tick[2] = {0, 0}; /* signed: an edge before the zero is negative */
    for (int s = 0; s < 2; s++) {
      have[s] = written[s] != m->stream[s].read;
      if (have[s]) tick[s] = (int32_t)(m->stream[s].ring[m->stream[s].read % m->ring_size] - m->zero);
    }
    int s;
    if (have[0] && have[1]) {
      if (tick[0] != tick[1]) s = tick[1] < tick[0];
      else s = m->last_level == 1 ? 0 : 1; /* two edges in one tick: alternate */
    } else if (have[0] || have[1]) {
      s = have[1];
      /* The other ring may still deliver an earlier edge unless the horizon rules it out. */
      if (!final && tick[s] >= 0 && tick[s] >= safe) break;
    } else {
      break;
    }
    int32_t t = tick[s];
    if (t < 0) {
      fail(m, CM_FAULT_EARLY);
      break;
    }
    if ((uint32_t)t >= CM_TICK_LIMIT) {
      fail(m, CM_FAULT_LATE);
      break;
    }
    if ((uint32_t)t < m->last_tick) {
      fail(m, CM_FAULT_ORDER);
      break;
    }
    if (s == m->last_level) {
      fail(m, CM_FAULT_SAME_LEVEL);
      break;
    }
    m->out[m->count] = (int32_t)((uint32_t)t << 1 | (uint32_t)s);
    m->count++;
    m->last_tick = (uint32_t)t;
    m->last_level = s;
    m->stream[s].read++;
  }
  return m->count;
}
