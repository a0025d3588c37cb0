/*
 * Capture merge: turns what a timer's two capture channels wrote through DMA into the
 * firmware's edge entries (docs/porting.md, "capture_bits", extended mode).
 *
 * One comparator output feeds two capture channels of a free-running 32-bit timer: one latches
 * rising edges, the other falling ones. Each channel's DMA stream copies the raw capture-register
 * value into its own circular ring. Neither ring knows about the other, and the raw values count
 * from wherever the timer happened to be. The firmware wants one list, in time order, of
 * (ticks since the capture's zero) << 1 | level. This routine makes that list, a piece at a time
 * (from the DMA half/full-transfer interrupts and from capture_count), and reports anything it
 * cannot vouch for as a fault instead of passing it on.
 *
 * Plain C99, no hardware access: the port passes in what it read from its DMA controller, so
 * the same code runs on the board, under emulation and in the host tests.
 */
#ifndef HT_CAPTURE_MERGE_H
#define HT_CAPTURE_MERGE_H

#include <stdint.h>

/* Why a capture was given up (bits, sticky until the next cm_open). */
#define CM_FAULT_LAPPED 0x01u     /* a DMA ring was overwritten before it was read */
#define CM_FAULT_SAME_LEVEL 0x02u /* two edges of one level in a row: an edge was lost */
#define CM_FAULT_LATE 0x08u       /* an edge at or beyond 2^29 ticks: past what an entry can hold */
#define CM_FAULT_ORDER 0x10u      /* a ring's values went backwards (corrupt data) */
#define CM_FAULT_PORT 0x20u       /* reported by the port: timer over-capture, DMA error */

/*
 * The entry written in place of the next edge when a fault is found: bit 31 set, which no edge
 * entry has (ticks stay below 2^29), so the firmware refuses the capture (ER 11) with the switch
 * open. The low bits carry the fault bits for whoever reads the buffer with a debugger.
 */
#define CM_FAULT_ENTRY 0x80000000u

/* Edges at or beyond this many ticks after the zero cannot be entries: the firmware reads an
   entry's bits 31 and 30 as raw-mode flags, so tick << 1 must leave bit 30 clear (8.4 s at 64 MHz,
   beyond the longest capture window). */
#define CM_TICK_LIMIT 0x20000000u

typedef struct {
  const volatile uint32_t* ring; /* raw capture-register values, written by DMA */
  uint32_t read;                 /* entries consumed since cm_open (a running total) */
} cm_stream;

typedef struct {
  cm_stream stream[2];  /* [0]: falling edges (level 0), [1]: rising edges (level 1) */
  uint32_t ring_size;   /* entries in each ring */
  uint32_t zero;        /* raw counter value of the capture's zero (switch opened, listen began) */
  volatile int32_t* out; /* the firmware's edge buffer */
  uint32_t capacity;
  uint32_t count;       /* entries written to out */
  uint32_t last_tick;
  int last_level;       /* level of the last edge (entry or dropped), -1 before the first */
  uint32_t fault;       /* CM_FAULT_* bits */
  uint32_t before_zero; /* edges latched before the zero: dropped (not part of the ring) */
} cm_merge;

/*
 * Starts a capture. `zero` is the raw counter value the entries count from; the rings are the
 * two DMA targets, `ring_size` entries each (a power of two), and their DMA must start at
 * index 0 after this. Edges latched before the zero (the comparator falling as the switch
 * closes, while the part charges) are not entries: they are dropped and counted in
 * `before_zero`, and their level still counts for the alternation check.
 */
void cm_open(cm_merge* m, uint32_t zero, volatile int32_t* out, uint32_t capacity,
             const volatile uint32_t* ring_fall, const volatile uint32_t* ring_rise, uint32_t ring_size);

/*
 * Merges what has arrived. `written_fall` / `written_rise`: entries each DMA stream has written
 * since cm_open, as running totals (cm_dma_written computes them from a circular stream's
 * position). `horizon`: a raw counter value such that every edge latched before it is already
 * counted in the totals (read the counter, subtract the DMA's worst-case latency, then read the
 * streams' positions). `final` != 0 once the capture has stopped: every latched edge is in, and
 * the horizon is ignored. Returns the entries now in `out` (never more than the capacity; once
 * the buffer is full the rest is left unread, which is not a fault).
 */
uint32_t cm_merge_step(cm_merge* m, uint32_t written_fall, uint32_t written_rise, uint32_t horizon, int final);

/* Records a fault the port found itself (over-capture flag, DMA transfer error). */
void cm_port_fault(cm_merge* m);

/*
 * Running total of entries a circular DMA stream has written, from `halves` (half- and
 * full-transfer events the port has counted since cm_open: each means another ring_size / 2
 * entries) and `remaining` (the stream's count-down register, ring_size..1). Exact while the
 * stream is less than a whole ring ahead of the events counted: a port whose interrupt found
 * both the half- and the full-transfer flag set (an event missed) must report cm_port_fault.
 */
uint32_t cm_dma_written(uint32_t ring_size, uint32_t halves, uint32_t remaining);

#endif
