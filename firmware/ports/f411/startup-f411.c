/*
 * Start-up for the STM32F411CE board port (and its QEMU variant): the vector table with the
 * interrupts the port uses, and a reset handler that copies .data, clears .bss and calls main.
 * The image is built with the soft-float ABI, so the FPU stays off.
 */
#include <stdint.h>

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _estack;
int main(void);
void DMA1_Stream5_IRQHandler(void);
void DMA1_Stream6_IRQHandler(void);
void TIM2_IRQHandler(void);
void USART1_IRQHandler(void);

void Reset_Handler(void) {
  uint32_t* src = &_sidata;
  for (uint32_t* dst = &_sdata; dst < &_edata;) *dst++ = *src++;
  for (uint32_t* dst = &_sbss; dst < &_ebss;) *dst++ = 0;
  main();
  for (;;) {
  }
}

/* A fault or an unexpected interrupt: stop here; the independent watchdog resets the chip, and
   the gate's pull-down holds the switch open meanwhile (the timer pin is released by the reset). */
static void Fault_Handler(void) {
  for (;;) {
  }
}

/* 16 core exceptions + the STM32F411's 86 interrupts (RM0383 §10.2, Table 37). */
#define VECTORS (16 + 86)

__attribute__((section(".isr_vector"), used)) static void (*const vectors[VECTORS])(void) = {
    [0] = (void (*)(void))(&_estack),
    [1] = Reset_Handler,
    [2 ... VECTORS - 1] = Fault_Handler,
    [16 + 16] = DMA1_Stream5_IRQHandler,
    [16 + 17] = DMA1_Stream6_IRQHandler,
    [16 + 28] = TIM2_IRQHandler,
    [16 + 37] = USART1_IRQHandler,
};
