/*
 * Start-up for the emulated STM32F405 port: vector table (core exceptions, SysTick and the
 * TIM2 and USART interrupts this port uses), and a reset handler that paints the C stack, copies .data,
 * clears .bss and calls main. Shared by the Cortex-M0 and Cortex-M4 builds.
 */
#include <stdint.h>

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _sstack, _estack;
int main(void);
void SysTick_Handler(void);
void TIM2_IRQHandler(void);
void USART1_IRQHandler(void);
void USART2_IRQHandler(void);
void qemu_port_fault_handler(void);

/* Written over the whole stack region at reset; the host finds the high-water mark by where it ends. */
#define STACK_PAINT 0x5afe57acu

void Reset_Handler(void) {
  uint32_t sp;
  __asm volatile("mov %0, sp" : "=r"(sp));
  /* Paint below this frame only (64 B spare), so the handler's own locals stay intact. */
  for (uint32_t* p = &_sstack; (uint32_t)p < sp - 64u; p++) *p = STACK_PAINT;
  uint32_t* src = &_sidata;
  for (uint32_t* dst = &_sdata; dst < &_edata;) *dst++ = *src++;
  for (uint32_t* dst = &_sbss; dst < &_ebss;) *dst++ = 0;
  main();
  for (;;) {
  }
}

static void Default_Handler(void) {
  qemu_port_fault_handler();
}

/* STM32F405: TIM2 is interrupt 28, USART1 37, USART2 38 (reference manual RM0090, vector table). */
#define IRQ_TIM2 28
#define IRQ_USART1 37
#define IRQ_USART2 38
#define VECTORS (16 + 82)

__attribute__((section(".isr_vector"), used)) static void (*const vectors[VECTORS])(void) = {
    [0] = (void (*)(void))(&_estack),
    [1] = Reset_Handler,
    [2] = Default_Handler, /* NMI */
    [3] = Default_Handler, /* HardFault */
    [4] = Default_Handler,
    [5] = Default_Handler,
    [6] = Default_Handler,
    [11] = Default_Handler, /* SVCall */
    [14] = Default_Handler, /* PendSV */
    [15] = SysTick_Handler,
    [16 + IRQ_TIM2] = TIM2_IRQHandler,
    [16 + IRQ_USART1] = USART1_IRQHandler,
    [16 + IRQ_USART2] = USART2_IRQHandler,
};
