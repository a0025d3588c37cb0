/*
 * henrytick's runtime for wasm2c output (see henrytick-rt.h for why it looks like this). Only the
 * functions the generated firmware references are provided; a reference to anything else is a
 * link error, which is the point: exceptions, tables and memory growth are not supported.
 */
#include "henrytick-rt.h"

#include <stdarg.h>
#include <string.h>

jmp_buf ht_rt_jump;
volatile int ht_rt_armed = 0;
volatile wasm_rt_trap_t ht_rt_last_trap = WASM_RT_TRAP_NONE;
uint32_t wasm_rt_call_stack_depth = 0;

static int initialized = 0;
static int memory_taken = 0;
/* The linear memory's backing. Word-aligned so that DMA can write the firmware's i32 edge buffer. */
static uint8_t linear_memory[HT_RT_MEMORY_BYTES] __attribute__((aligned(8)));

void wasm_rt_init(void) {
  initialized = 1;
}

bool wasm_rt_is_initialized(void) {
  return initialized != 0;
}

void wasm_rt_free(void) {
  initialized = 0;
}

void wasm_rt_trap(wasm_rt_trap_t code) {
  ht_rt_last_trap = code;
  ht_port_trap(code);
  wasm_rt_call_stack_depth = 0;
  if (ht_rt_armed) {
    ht_rt_armed = 0;
    longjmp(ht_rt_jump, 1);
  }
  for (;;) {
    /* No guarded caller: stay here with the switch open until a watchdog resets the chip. */
  }
}

const char* wasm_rt_strerror(wasm_rt_trap_t trap) {
  switch (trap) {
    case WASM_RT_TRAP_NONE: return "no error";
    case WASM_RT_TRAP_OOB: return "out-of-bounds memory access";
    case WASM_RT_TRAP_INT_OVERFLOW: return "integer overflow";
    case WASM_RT_TRAP_DIV_BY_ZERO: return "integer divide by zero";
    case WASM_RT_TRAP_INVALID_CONVERSION: return "invalid conversion";
    case WASM_RT_TRAP_UNREACHABLE: return "unreachable executed";
    case WASM_RT_TRAP_CALL_INDIRECT: return "invalid call_indirect";
    case WASM_RT_TRAP_EXHAUSTION: return "call stack exhausted";
    default: return "trap";
  }
}

/*
 * Function types are only compared by call_indirect, so an index per distinct signature is
 * enough. Signatures are packed (up to 8 params, 2 results, 3 bits per type) into a small table.
 */
#define MAX_FUNC_TYPES 32
static uint64_t func_types[MAX_FUNC_TYPES];
static uint32_t func_type_count = 0;

uint32_t wasm_rt_register_func_type(uint32_t params, uint32_t results, ...) {
  if (params > 8 || results > 2) wasm_rt_trap(WASM_RT_TRAP_CALL_INDIRECT);
  uint64_t key = ((uint64_t)params << 60) | ((uint64_t)results << 56);
  va_list ap;
  va_start(ap, results);
  for (uint32_t i = 0; i < params + results; i++) {
    key |= (uint64_t)(va_arg(ap, int) & 7) << (3 * i);
  }
  va_end(ap);
  for (uint32_t i = 0; i < func_type_count; i++) {
    if (func_types[i] == key) return i;
  }
  if (func_type_count >= MAX_FUNC_TYPES) wasm_rt_trap(WASM_RT_TRAP_CALL_INDIRECT);
  func_types[func_type_count] = key;
  return func_type_count++;
}

/* Bytes of the page that are backed: the generated code bounds-checks every access against it. */
static uint32_t backed_bytes(uint32_t pages) {
  uint64_t page_bytes = (uint64_t)pages * HT_RT_PAGE_BYTES;
  return page_bytes < HT_RT_MEMORY_BYTES ? (uint32_t)page_bytes : HT_RT_MEMORY_BYTES;
}

void wasm_rt_allocate_memory(wasm_rt_memory_t* memory, uint32_t initial_pages, uint32_t max_pages) {
  /* Bounded memory: one static region, handed out once, never more than it holds. */
  if (memory_taken || initial_pages > HT_RT_MEMORY_PAGES) wasm_rt_trap(WASM_RT_TRAP_OOB);
  (void)max_pages;
  memory_taken = 1;
  memset(linear_memory, 0, sizeof linear_memory);
  memory->data = linear_memory;
  memory->pages = initial_pages; /* what memory.size reports: the module's own view */
  memory->max_pages = HT_RT_MEMORY_PAGES;
  memory->size = backed_bytes(initial_pages);
}

uint32_t wasm_rt_grow_memory(wasm_rt_memory_t* memory, uint32_t delta) {
  uint32_t old = memory->pages;
  if (delta > HT_RT_MEMORY_PAGES - old) return (uint32_t)-1; /* the wasm way to say "no" */
  memory->pages = old + delta;
  memory->size = backed_bytes(memory->pages);
  return old;
}

void ht_rt_require_memory(uint32_t used_bytes) {
  if (used_bytes > HT_RT_MEMORY_BYTES) wasm_rt_trap(WASM_RT_TRAP_OOB);
}

void wasm_rt_free_memory(wasm_rt_memory_t* memory) {
  memory->data = 0;
  memory->pages = 0;
  memory->size = 0;
  memory_taken = 0;
}
