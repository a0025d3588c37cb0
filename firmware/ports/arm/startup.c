/*
 * Minimal Cortex-M start-up for the size builds: a vector table, and a reset handler that
 * copies .data, clears .bss (which holds the firmware's 64 KiB linear memory) and calls main.
 * A real board uses its vendor's start-up instead; this one exists so the size figures come
 * from a complete, linked image.
 */
#include <stdint.h>

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _estack;
int main(void);

void Reset_Handler(void) {
  uint32_t* src = &_sidata;
  for (uint32_t* dst = &_sdata; dst < &_edata;) *dst++ = *src++;
  for (uint32_t* dst = &_sbss; dst < &_ebss;) *dst++ = 0;
  main();
  for (;;) {
  }
}

static void Default_Handler(void) {
  for (;;) {
  }
}

__attribute__((section(".isr_vector"), used)) static void (*const vectors[16])(void) = {
    (void (*)(void))(&_estack), Reset_Handler, Default_Handler, Default_Handler,
};
