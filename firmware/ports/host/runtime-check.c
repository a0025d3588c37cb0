/*
 * Checks of the runtime on its own (no firmware): bounded memory backed by less than a page
 * (built with HT_RT_MEMORY_BYTES = 4096), refused growth, the check at start, function-type
 * indices, and the trap path (hook first, then back to the guarded call site). Prints one line per
 * check, "ok <name>" or "FAIL <name>", and exits non-zero on any failure.
 */
#include <stdio.h>

#include "henrytick-rt.h"

static int hook_calls = 0;
static wasm_rt_trap_t hook_code = WASM_RT_TRAP_NONE;
static int failures = 0;

void ht_port_trap(wasm_rt_trap_t code) {
  hook_calls++;
  hook_code = code;
}

static void check(int ok, const char* name) {
  printf("%s %s\n", ok ? "ok" : "FAIL", name);
  if (!ok) failures++;
}

int main(void) {
  wasm_rt_init();
  check(wasm_rt_is_initialized(), "initialized");

  wasm_rt_memory_t mem;
  wasm_rt_allocate_memory(&mem, 1, 1);
  check(mem.size == HT_RT_MEMORY_BYTES && HT_RT_MEMORY_BYTES < 65536 && mem.pages == 1 && mem.data != 0,
        "one page of linear memory, backed by HT_RT_MEMORY_BYTES");
  check(((uintptr_t)mem.data & 7u) == 0, "linear memory 8-byte aligned");
  check(wasm_rt_grow_memory(&mem, 1) == (uint32_t)-1 && mem.pages == 1, "growth beyond one page refused");
  check(wasm_rt_grow_memory(&mem, 0) == 1, "growth by zero pages reports the size");

  volatile int fits = 0; /* set between setjmp and longjmp */
  if (HT_RT_TRY()) {
    ht_rt_require_memory(HT_RT_MEMORY_BYTES);
    fits = 1;
    ht_rt_require_memory(HT_RT_MEMORY_BYTES + 1); /* one byte more than the backing: must trap */
    HT_RT_DONE();
    fits = 2;
  }
  check(fits == 1 && hook_calls == 1 && hook_code == WASM_RT_TRAP_OOB, "check at start: a firmware larger than the backing traps");
  hook_calls = 0;

  wasm_rt_memory_t second;
  int returned = 0;
  if (HT_RT_TRY()) {
    wasm_rt_allocate_memory(&second, 1, 1); /* the one page is taken: must trap */
    HT_RT_DONE();
    returned = 1;
  }
  check(!returned && hook_calls == 1 && hook_code == WASM_RT_TRAP_OOB, "second memory traps through the hook");
  check(ht_rt_last_trap == WASM_RT_TRAP_OOB && !ht_rt_armed, "guard disarmed after a trap");

  uint32_t a = wasm_rt_register_func_type(2, 1, WASM_RT_I32, WASM_RT_I32, WASM_RT_I32);
  uint32_t b = wasm_rt_register_func_type(1, 0, WASM_RT_I32);
  uint32_t c = wasm_rt_register_func_type(2, 1, WASM_RT_I32, WASM_RT_I32, WASM_RT_I32);
  check(a == c && a != b, "function types: equal signatures share an index");

  wasm_rt_call_stack_depth = 7;
  if (HT_RT_TRY()) {
    wasm_rt_trap(WASM_RT_TRAP_EXHAUSTION);
  }
  check(hook_calls == 2 && hook_code == WASM_RT_TRAP_EXHAUSTION && wasm_rt_call_stack_depth == 0,
        "trap resets the call depth and returns to the guard");

  wasm_rt_free_memory(&mem);
  wasm_rt_allocate_memory(&second, 1, 1);
  check(second.size == HT_RT_MEMORY_BYTES, "memory can be taken again after it is freed (re-instantiation)");
  return failures == 0 ? 0 : 1;
}
