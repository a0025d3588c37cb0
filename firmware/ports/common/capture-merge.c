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
 * 64 MHz) anywhere inside a capture. An edge before the zero shows up as a negative difference
 * (read as signed) and is dropped; one at or beyond 2^29 ticks (CM_TICK_LIMIT) is a fault.
 */
#include "capture-merge.h"

#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC optimize("O2") /* the per-edge loop: speed over the few bytes -Os would save */
#endif

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
  m->before_zero = 0;
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

/* A run of pairs for the fast path below: an edge of `level` from ring a, then one of the other
   level from ring b, at most `n` pairs. */
typedef struct {
  const volatile uint32_t* a;
  const volatile uint32_t* b;
  volatile int32_t* out; /* where the first pair goes */
  uint32_t n, read_a, read_b, zero, mask, level, last_tick;
} cm_pairs;

/* Takes pairs while each is in order with the next edge of ring a after it; returns how many.
   Out of line, so that its loop keeps everything in registers. */
static __attribute__((noinline)) uint32_t pairs(cm_pairs* p) {
  const volatile uint32_t* const a = p->a;
  const volatile uint32_t* const b = p->b;
  volatile int32_t* out = p->out;
  const uint32_t zero = p->zero, mask = p->mask, level = p->level;
  uint32_t ra = p->read_a, rb = p->read_b;
  int32_t last = (int32_t)p->last_tick;
  uint32_t k = 0;
  int32_t t1 = (int32_t)(a[ra & mask] - zero);
  for (; k < p->n; k++) {
    const int32_t t2 = (int32_t)(b[rb & mask] - zero);
    const int32_t t3 = (int32_t)(a[(ra + 1u) & mask] - zero);
    if (!(last <= t1 && t1 < t2 && t2 < t3 && (uint32_t)t2 < CM_TICK_LIMIT)) break;
    out[0] = (int32_t)((uint32_t)t1 << 1 | level);
    out[1] = (int32_t)((uint32_t)t2 << 1 | (level ^ 1u));
    out += 2;
    ra++;
    rb++;
    last = t2;
    t1 = t3;
  }
  p->read_a = ra;
  p->read_b = rb;
  p->last_tick = (uint32_t)last;
  return k;
}

/* The fast path from ring a (edges of `level`) and ring b; returns the new count. */
static uint32_t fast(cm_merge* m, const volatile uint32_t* a, uint32_t* read_a, uint32_t written_a,
                     const volatile uint32_t* b, uint32_t* read_b, uint32_t written_b, uint32_t level, uint32_t count,
                     uint32_t* last_tick) {
  uint32_t n = (m->capacity - count) / 2u;
  if (written_a - *read_a < 2u) return count;
  if (written_a - *read_a - 1u < n) n = written_a - *read_a - 1u;
  if (written_b - *read_b < n) n = written_b - *read_b;
  if (n == 0) return count;
  cm_pairs p = {a, b, m->out + count, n, *read_a, *read_b, m->zero, m->ring_size - 1u, level, *last_tick};
  count += 2u * pairs(&p);
  *read_a = p.read_a;
  *read_b = p.read_b;
  *last_tick = p.last_tick;
  return count;
}

uint32_t cm_merge_step(cm_merge* m, uint32_t written_fall, uint32_t written_rise, uint32_t horizon, int final) {
  /* A full buffer ends the capture for the firmware: what follows is left unread, not a fault. */
  if (m->fault || m->count >= m->capacity) return m->count;
  /* More unread than a ring holds: its oldest unread entries have been overwritten. */
  if (written_fall - m->stream[0].read > m->ring_size || written_rise - m->stream[1].read > m->ring_size) {
    fail(m, CM_FAULT_LAPPED);
    return m->count;
  }
  /* The loop runs for every edge at up to 3.2 M edges/s: locals, and ring sizes that are powers
     of two so that indices are masked, not divided. */
  const uint32_t mask = m->ring_size - 1u;
  const uint32_t zero = m->zero;
  const volatile uint32_t* const ring0 = m->stream[0].ring;
  const volatile uint32_t* const ring1 = m->stream[1].ring;
  uint32_t read0 = m->stream[0].read, read1 = m->stream[1].read;
  uint32_t count = m->count, last_tick = m->last_tick;
  int last_level = m->last_level;
  uint32_t why = 0;
  /* Edges latched before the horizon are all in; a horizon before the zero lets none out. */
  const int32_t safe = (int32_t)(horizon - zero);
  while (count < m->capacity) {
    /* Fast path for the common case: after a rising edge, a falling edge f, the rising edge r
       after it and the falling edge after that, f2, with f < r < f2, are two entries with no
       edge lost between them and nothing earlier still to come. (And the same with the levels
       swapped.) Anything else, one edge at a time below. */
    if (last_level == 1) {
      count = fast(m, ring0, &read0, written_fall, ring1, &read1, written_rise, 0, count, &last_tick);
    } else if (last_level == 0) {
      count = fast(m, ring1, &read1, written_rise, ring0, &read0, written_fall, 1, count, &last_tick);
    }
    if (count >= m->capacity) break;
    const int have0 = read0 != written_fall, have1 = read1 != written_rise;
    /* Signed: an edge latched before the zero is negative. */
    const int32_t t0 = have0 ? (int32_t)(ring0[read0 & mask] - zero) : 0;
    const int32_t t1 = have1 ? (int32_t)(ring1[read1 & mask] - zero) : 0;
    int s;
    int32_t t;
    if (have0 && have1) {
      if (t0 != t1) s = t1 < t0;
      else s = last_level == 1 ? 0 : 1; /* two edges in one tick: alternate */
    } else if (have0 || have1) {
      s = have1;
      /* The other ring may still deliver an earlier edge unless the horizon rules it out. */
      if (!final && (s ? t1 : t0) >= 0 && (s ? t1 : t0) >= safe) break;
    } else {
      break;
    }
    t = s ? t1 : t0;
    if (s == last_level) {
      why = CM_FAULT_SAME_LEVEL;
      break;
    }
    if (s) read1++;
    else read0++;
    last_level = s;
    if (t < 0) {
      m->before_zero++;
      continue;
    }
    if ((uint32_t)t >= CM_TICK_LIMIT) {
      why = CM_FAULT_LATE;
      break;
    }
    if ((uint32_t)t < last_tick) {
      why = CM_FAULT_ORDER;
      break;
    }
    m->out[count++] = (int32_t)((uint32_t)t << 1 | (uint32_t)s);
    last_tick = (uint32_t)t;
  }
  m->stream[0].read = read0;
  m->stream[1].read = read1;
  m->count = count;
  m->last_tick = last_tick;
  m->last_level = last_level;
  if (why) fail(m, why);
  return m->count;
}
