/*
 * Clock tree of the STM32F411CE board port: TIM2 must count at exactly the board's 64 MHz tick
 * (tick_hz in its board file; HT_BOARD_TICK_HZ in the generated henrytick-board.h) from the
 * board's 25 MHz crystal.
 *
 *   HSE 25 MHz / M 25 = 1 MHz VCO input        (RM0383 §6.3.2 RCC_PLLCFGR: 1..2 MHz)
 *   1 MHz x N 384     = 384 MHz VCO output     (100..432 MHz)
 *   384 MHz / P 6     = 64 MHz SYSCLK = HCLK   (P one of 2, 4, 6, 8; F411 HCLK at most 100 MHz)
 *   384 MHz / Q 8     = 48 MHz                 (what USB OTG FS needs: ready for USB CDC)
 *   APB1 = HCLK / 2   = 32 MHz                 (APB1 at most 50 MHz)
 *   TIM2 = 2 x APB1   = 64 MHz                 (RM0383 §6.2: with an APB prescaler other than 1
 *                                               the timers run at twice the bus clock; TIMPRE 0)
 *   APB2 = HCLK / 1   = 64 MHz                 (USART1)
 *
 * M 25, N 256, P 4 gives 64 MHz too, but no Q then gives 48 MHz (256 / 48 is not whole); the
 * values here keep the USB clock for the next step. The register limits are from RM0383 (value
 * from memory where the comment gives no table); the arithmetic is checked below at compile
 * time and by firmware/test/board-port.test.ts.
 */
#ifndef HT_F411_CLOCK_H
#define HT_F411_CLOCK_H

#include "henrytick-board.h"

#define F411_HSE_HZ 25000000u
#define F411_PLL_M 25u
#define F411_PLL_N 384u
#define F411_PLL_P 6u
#define F411_PLL_Q 8u
#define F411_AHB_DIV 1u
#define F411_APB1_DIV 2u
#define F411_APB2_DIV 1u

#define F411_VCO_IN_HZ (F411_HSE_HZ / F411_PLL_M)
#define F411_VCO_HZ (F411_VCO_IN_HZ * F411_PLL_N)
#define F411_SYSCLK_HZ (F411_VCO_HZ / F411_PLL_P)
#define F411_PLL48_HZ (F411_VCO_HZ / F411_PLL_Q)
#define F411_HCLK_HZ (F411_SYSCLK_HZ / F411_AHB_DIV)
#define F411_PCLK1_HZ (F411_HCLK_HZ / F411_APB1_DIV)
#define F411_PCLK2_HZ (F411_HCLK_HZ / F411_APB2_DIV)
#define F411_TIM2_HZ (F411_APB1_DIV == 1u ? F411_PCLK1_HZ : 2u * F411_PCLK1_HZ)

/* Flash wait states for 64 MHz: RM0383 §3.4 asks 1 at 2.7-3.6 V (value from memory); 2 also
   covers a supply down to 2.4 V at the cost of a little speed the instruction cache mostly hides. */
#define F411_FLASH_WAIT_STATES 2u

/* Host link: USART1 on APB2, 16x oversampling; BRR = PCLK2 / baud rounded (mantissa.fraction/16). */
#define F411_BAUD 115200u
#define F411_USART1_BRR ((F411_PCLK2_HZ + F411_BAUD / 2u) / F411_BAUD)

_Static_assert(F411_HSE_HZ % F411_PLL_M == 0, "VCO input must be whole");
_Static_assert(F411_VCO_IN_HZ >= 1000000u && F411_VCO_IN_HZ <= 2000000u, "VCO input 1..2 MHz");
_Static_assert(F411_VCO_HZ >= 100000000u && F411_VCO_HZ <= 432000000u, "VCO output 100..432 MHz");
_Static_assert(F411_PLL_P == 2u || F411_PLL_P == 4u || F411_PLL_P == 6u || F411_PLL_P == 8u, "P is 2, 4, 6 or 8");
_Static_assert(F411_PLL_Q >= 2u && F411_PLL_Q <= 15u, "Q is 2..15");
_Static_assert(F411_VCO_HZ % F411_PLL_P == 0 && F411_SYSCLK_HZ <= 100000000u, "SYSCLK whole, at most 100 MHz");
_Static_assert(F411_PLL48_HZ == 48000000u, "48 MHz for USB");
_Static_assert(F411_PCLK1_HZ <= 50000000u, "APB1 at most 50 MHz");
_Static_assert(F411_TIM2_HZ == HT_BOARD_TICK_HZ, "TIM2 at the board's tick rate (henrytick-board.h, from the board file)");

#endif
