/*
 * henrytick's runtime for wasm2c output: what the generated C needs from "wasm-rt.h", sized
 * for a microcontroller. One module instance, one page of linear memory (64 KiB as the module
 * sees it) backed in static storage by only the bytes the firmware uses (no mmap, no malloc, no
 * guard pages: every access is bounds-checked by the generated code against the backing), a
 * call-depth limit instead of a stack-overflow signal, and traps turned into a call to the
 * port's hook followed by a jump back to the port's main loop.
 *
 * Build the generated C with WASM_RT_MEMCHECK_SIGNAL_HANDLER=0 and WASM_RT_USE_STACK_DEPTH_COUNT=1
 * (this header sets both before including wasm-rt.h, so include it first).
 */
#ifndef HENRYTICK_RT_H
#define HENRYTICK_RT_H

#ifndef WASM_RT_MEMCHECK_SIGNAL_HANDLER
#define WASM_RT_MEMCHECK_SIGNAL_HANDLER 0
#endif
#ifndef WASM_RT_USE_STACK_DEPTH_COUNT
#define WASM_RT_USE_STACK_DEPTH_COUNT 1
#endif
#ifndef WASM_RT_MAX_CALL_STACK_DEPTH
/* The firmware's deepest call chain is about a dozen frames; 64 leaves room and bounds the C stack. */
#define WASM_RT_MAX_CALL_STACK_DEPTH 64
#endif

#include <setjmp.h>
#include <stdint.h>
#include "wasm-rt.h"

/* Pages of linear memory the module declares: exactly one. */
#define HT_RT_MEMORY_PAGES 1u
#define HT_RT_PAGE_BYTES 65536u

/*
 * Bytes of static storage behind that page. The firmware allocates everything while its module
 * starts and nothing later, so the page's upper part is never touched: back only what it uses
 * (fw_memory_used() plus a margin; firmware/ports/memory-size.ts computes the value for the
 * current build). An access beyond the backing traps like any out-of-bounds access. Default:
 * the whole page.
 */
#ifndef HT_RT_MEMORY_BYTES
#define HT_RT_MEMORY_BYTES HT_RT_PAGE_BYTES
#endif
#if HT_RT_MEMORY_BYTES > HT_RT_PAGE_BYTES || HT_RT_MEMORY_BYTES % 8 != 0
#error "HT_RT_MEMORY_BYTES must be a multiple of 8 and at most one page"
#endif

/*
 * The check at start: call it once after instantiating the module, with fw_memory_used(). It
 * traps (WASM_RT_TRAP_OOB, through the port's hook) when the backing is smaller than what the
 * firmware uses, so a backing that no longer fits a rebuilt firmware is found before the first
 * command, not at some later access.
 */
void ht_rt_require_memory(uint32_t used_bytes);

/*
 * Called by the runtime when the firmware traps (out-of-bounds access, unreachable, call depth),
 * before anything else happens. The port must force the switch open here and may record the
 * code; it must not call back into the firmware. Defined by the port.
 */
void ht_port_trap(wasm_rt_trap_t code);

/*
 * Guarded calls into the firmware. A port writes
 *     if (HT_RT_TRY()) { ...firmware calls... HT_RT_DONE(); } else { ...recover... }
 * If the firmware traps inside, ht_port_trap() runs and control comes back to the else branch
 * with ht_rt_last_trap set; the instance is then unusable and must be instantiated again.
 */
extern jmp_buf ht_rt_jump;
extern volatile int ht_rt_armed;
extern volatile wasm_rt_trap_t ht_rt_last_trap;
#define HT_RT_TRY() (ht_rt_armed = 1, setjmp(ht_rt_jump) == 0)
#define HT_RT_DONE() (ht_rt_armed = 0)

#endif
