/*
 * Replays a recorded capture through the capture merge the way a board's DMA and interrupts
 * would drive it, with no hardware: the shared check that the merge behaves the same wherever it
 * is compiled (host gcc, Cortex-M on the emulated chip). See merge-replay.c.
 */
#ifndef HT_MERGE_REPLAY_H
#define HT_MERGE_REPLAY_H

#include <stdint.h>
#include "capture-merge.h"

/*
 * `edges`: n entries in the firmware's format (tick << 1 | level), in time order. Each becomes a
 * raw capture value zero + tick in its level's ring (`rings`: 2 * ring_size words, falling ring
 * first). A stream crossing half its ring runs a merge step as its half/full-transfer interrupt
 * would; every `poll_every` edges (0: never) a step with the horizon at the last edge runs as
 * capture_count would; the final step runs at the end. Returns the number of entries in `out`;
 * `m` holds the fault bits afterwards.
 */
uint32_t cm_replay(cm_merge* m, const uint32_t* edges, uint32_t n, uint32_t zero, uint32_t* rings, uint32_t ring_size,
                   int32_t* out, uint32_t capacity, uint32_t poll_every);

/* 32-bit FNV-1a over the words' bytes, least significant first. */
uint32_t cm_checksum(const int32_t* words, uint32_t n);

#endif
