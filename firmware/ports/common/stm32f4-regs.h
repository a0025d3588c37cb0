/*
 * The few STM32F4 registers the STM32F4 ports touch, by address: the STM32F411CE board port
 * (f411/, RM0383) and the emulated STM32F405 (qemu-f405/, RM0090), whose RCC, GPIO, TIM2, DMA1,
 * USART and core blocks sit at the same addresses with the same layout. Register-level: no vendor
 * headers are needed to build either.
 */
#ifndef HT_STM32F4_REGS_H
#define HT_STM32F4_REGS_H

#include <stdint.h>

#ifdef HT_F411_HOSTSIM
/* Host test build: registers are words in the test driver's model (f411-hostsim.c). */
volatile uint32_t* ht_sim_reg(uint32_t addr);
#define REG(a) (*ht_sim_reg((uint32_t)(a)))
#else
#define REG(a) (*(volatile uint32_t*)(uintptr_t)(a))
#endif

/* RCC (RM0383 §6.3) */
#define RCC_BASE 0x40023800u
#define RCC_CR REG(RCC_BASE + 0x00u)
#define RCC_PLLCFGR REG(RCC_BASE + 0x04u)
#define RCC_CFGR REG(RCC_BASE + 0x08u)
#define RCC_AHB1ENR REG(RCC_BASE + 0x30u)
#define RCC_APB1ENR REG(RCC_BASE + 0x40u)
#define RCC_APB2ENR REG(RCC_BASE + 0x44u)
#define RCC_CR_HSEON (1u << 16)
#define RCC_CR_HSERDY (1u << 17)
#define RCC_CR_PLLON (1u << 24)
#define RCC_CR_PLLRDY (1u << 25)
#define RCC_PLLCFGR_SRC_HSE (1u << 22)
#define RCC_CFGR_SW_PLL 2u
#define RCC_CFGR_SWS_MASK (3u << 2)
#define RCC_CFGR_SWS_PLL (2u << 2)
#define RCC_AHB1ENR_GPIOA (1u << 0)
#define RCC_AHB1ENR_GPIOB (1u << 1)
#define RCC_AHB1ENR_GPIOC (1u << 2)
#define RCC_AHB1ENR_DMA1 (1u << 21)
#define RCC_APB1ENR_TIM2 (1u << 0)
#define RCC_APB1ENR_USART2 (1u << 17)
#define RCC_APB2ENR_USART1 (1u << 4)

/* Flash interface (RM0383 §3.8) */
#define FLASH_ACR REG(0x40023C00u)
#define FLASH_ACR_PRFTEN (1u << 8)
#define FLASH_ACR_ICEN (1u << 9)
#define FLASH_ACR_DCEN (1u << 10)

/* GPIO (RM0383 §8.4) */
#define GPIOA 0x40020000u
#define GPIOB 0x40020400u
#define GPIOC 0x40020800u
#define GPIO_MODER(p) REG((p) + 0x00u)
#define GPIO_OTYPER(p) REG((p) + 0x04u)
#define GPIO_OSPEEDR(p) REG((p) + 0x08u)
#define GPIO_PUPDR(p) REG((p) + 0x0Cu)
#define GPIO_IDR(p) REG((p) + 0x10u)
#define GPIO_ODR(p) REG((p) + 0x14u)
#define GPIO_BSRR(p) REG((p) + 0x18u)
#define GPIO_AFRL(p) REG((p) + 0x20u)
#define GPIO_AFRH(p) REG((p) + 0x24u)

/* TIM2, 32-bit general-purpose timer (RM0383 §13.4) */
#define TIM2 0x40000000u
#define TIM2_CR1 REG(TIM2 + 0x00u)
#define TIM2_DIER REG(TIM2 + 0x0Cu)
#define TIM2_SR REG(TIM2 + 0x10u)
#define TIM2_EGR REG(TIM2 + 0x14u)
#define TIM2_CCMR1 REG(TIM2 + 0x18u)
#define TIM2_CCMR2 REG(TIM2 + 0x1Cu)
#define TIM2_CCER REG(TIM2 + 0x20u)
#define TIM2_CNT REG(TIM2 + 0x24u)
#define TIM2_PSC REG(TIM2 + 0x28u)
#define TIM2_ARR REG(TIM2 + 0x2Cu)
#define TIM2_CCR1_ADDR (TIM2 + 0x34u)
#define TIM2_CCR2_ADDR (TIM2 + 0x38u)
#define TIM2_CCR3 REG(TIM2 + 0x3Cu)
#define TIM2_CCR4 REG(TIM2 + 0x40u)
#define TIM_CR1_CEN (1u << 0)
#define TIM_EGR_UG (1u << 0)
#define TIM_DIER_UIE (1u << 0)
#define TIM_DIER_CC4IE (1u << 4)
#define TIM_DIER_CC1DE (1u << 9)
#define TIM_DIER_CC2DE (1u << 10)
#define TIM_SR_CC4IF (1u << 4)
#define TIM_SR_CC1OF (1u << 9)
#define TIM_SR_CC2OF (1u << 10)
/* CCMR1, input: CC1S 01 = IC1 on TI1; CC2S 10 = IC2 on TI1 (both channels watch one pin). */
#define TIM_CCMR1_CC1S_TI1 (1u << 0)
#define TIM_CCMR1_CC2S_TI1 (2u << 8)
/* CCMR2, channel 3 output-compare mode (OC3M, bits 6:4) */
#define TIM_OC3M_MASK (7u << 4)
#define TIM_OC3M_INACTIVE_ON_MATCH (2u << 4)
#define TIM_OC3M_FORCE_INACTIVE (4u << 4)
#define TIM_OC3M_FORCE_ACTIVE (5u << 4)
#define TIM_CCER_CC1E (1u << 0)
#define TIM_CCER_CC2E (1u << 4)
#define TIM_CCER_CC2P (1u << 5)
#define TIM_CCER_CC3E (1u << 8)

/* DMA1 (RM0383 §9.5): streams 5 and 6 */
#define DMA1 0x40026000u
#define DMA1_HISR REG(DMA1 + 0x04u)
#define DMA1_HIFCR REG(DMA1 + 0x0Cu)
#define DMA_S(n) (DMA1 + 0x10u + 0x18u * (n))
#define DMA_SCR(n) REG(DMA_S(n) + 0x00u)
#define DMA_SNDTR(n) REG(DMA_S(n) + 0x04u)
#define DMA_SPAR(n) REG(DMA_S(n) + 0x08u)
#define DMA_SM0AR(n) REG(DMA_S(n) + 0x0Cu)
#define DMA_SFCR(n) REG(DMA_S(n) + 0x14u)
#define DMA_SCR_EN (1u << 0)
#define DMA_SCR_DMEIE (1u << 1)
#define DMA_SCR_TEIE (1u << 2)
#define DMA_SCR_HTIE (1u << 3)
#define DMA_SCR_TCIE (1u << 4)
#define DMA_SCR_CIRC (1u << 8)
#define DMA_SCR_MINC (1u << 10)
#define DMA_SCR_PSIZE_32 (2u << 11)
#define DMA_SCR_MSIZE_32 (2u << 13)
#define DMA_SCR_PL_VERY_HIGH (3u << 16)
#define DMA_SCR_CHSEL(c) ((uint32_t)(c) << 25)
/* HISR/HIFCR: stream 5 flags at bit 6, stream 6 at bit 16 (FEIF +0, DMEIF +2, TEIF +3, HTIF +4, TCIF +5) */
#define DMA_HI_SHIFT_S5 6u
#define DMA_HI_SHIFT_S6 16u
#define DMA_FLAG_FE (1u << 0)
#define DMA_FLAG_DME (1u << 2)
#define DMA_FLAG_TE (1u << 3)
#define DMA_FLAG_HT (1u << 4)
#define DMA_FLAG_TC (1u << 5)
#define DMA_FLAGS_ALL 0x3Du

/* USART1 and USART2 (RM0383 §19.6) */
#define USART1 0x40011000u
#define USART2 0x40004400u
#define USART_SR(b) REG((b) + 0x00u)
#define USART_DR(b) REG((b) + 0x04u)
#define USART_BRR(b) REG((b) + 0x08u)
#define USART_CR1(b) REG((b) + 0x0Cu)
#define USART_SR_PE (1u << 0)
#define USART_SR_FE (1u << 1)
#define USART_SR_NF (1u << 2)
#define USART_SR_ORE (1u << 3)
#define USART_SR_RXNE (1u << 5)
#define USART_SR_TXE (1u << 7)
#define USART_CR1_RE (1u << 2)
#define USART_CR1_TE (1u << 3)
#define USART_CR1_RXNEIE (1u << 5)
#define USART_CR1_UE (1u << 13)

/* Independent watchdog (RM0383 §15.4) */
#define IWDG_KR REG(0x40003000u)
#define IWDG_PR REG(0x40003004u)
#define IWDG_RLR REG(0x40003008u)

/* 96-bit unique device ID (RM0383 §24.1) */
#define UID_BASE 0x1FFF7A10u

/* Cortex-M core: SysTick, SCB, NVIC (NVIC_IPR_BYTE needs byte access: ARMv7-M only) */
#define SYST_CSR REG(0xE000E010u)
#define SYST_RVR REG(0xE000E014u)
#define SYST_CVR REG(0xE000E018u)
#define SCB_ICSR REG(0xE000ED04u)
#define SCB_ICSR_PENDSTSET (1u << 26)
#define NVIC_ISER(n) REG(0xE000E100u + 4u * (n))
#ifdef HT_F411_HOSTSIM
#define NVIC_IPR_BYTE(irq) (*(volatile uint8_t*)ht_sim_reg(0xE000E400u + 4u * (irq)))
#else
#define NVIC_IPR_BYTE(irq) (*(volatile uint8_t*)(uintptr_t)(0xE000E400u + (irq)))
#endif

/* Interrupt numbers (RM0383 §10.2, vector table) */
#define IRQ_DMA1_STREAM5 16u
#define IRQ_DMA1_STREAM6 17u
#define IRQ_TIM2 28u
#define IRQ_USART1 37u
#define IRQ_USART2 38u

#endif
