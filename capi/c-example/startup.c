/* Start-up of the C example firmware (Cortex-M0+/M3/M4F): vector table, .data and .bss set-up,
 * the free RAM painted for the stack measurement, the FPU switched on where there is one, then
 * main. Faults end the run with a failure status. */
#include <stdint.h>

#include "semihosting.h"

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _stack_top;
int main(void);
void cw_reset(void);

static void on_fault(void) { semihosting_exit(false); }

#define STACK_PAINT 0x5A5A5A5Au

/* Fill the free RAM between .bss and the stack pointer (less a margin for this function's own
 * frame), so stack_used() can find the deepest point the stack reached since (a word still
 * holding the paint was never written). */
void stack_paint(void) {
    uint32_t *word = &_ebss;
    uint32_t sp;
    __asm volatile("mov %0, sp" : "=r"(sp));
    while ((uintptr_t)word < (uintptr_t)sp - 64u) {
        *word = STACK_PAINT;
        word++;
    }
}

uint32_t stack_used(void) {
    const uint32_t *word = &_ebss;
    while (word < &_stack_top && *word == STACK_PAINT) {
        word++;
    }
    return (uint32_t)((uintptr_t)&_stack_top - (uintptr_t)word);
}

void cw_reset(void) {
    const uint32_t *from = &_sidata;
    uint32_t *to = &_sdata;
    while (to < &_edata) {
        *to = *from;
        to++;
        from++;
    }
    for (to = &_sbss; to < &_ebss; to++) {
        *to = 0u;
    }
    stack_paint();
#if defined(__ARM_FP)
    /* CPACR: full access to CP10 and CP11 (the FPU) before any floating-point register use */
    *(volatile uint32_t *)0xE000ED88u |= (0xFu << 20);
    __asm volatile("dsb\n\tisb" ::: "memory");
#endif
    semihosting_exit(main() == 0);
}

typedef void (*vector)(void);

/* Initial stack pointer, reset, NMI, HardFault; the M3/M4 fault handlers; the rest unused. */
__attribute__((section(".vector_table"), used)) const vector cw_vectors[16] = {
    (vector)(uintptr_t)&_stack_top,
    cw_reset,
    on_fault,
    on_fault,
    on_fault,
    on_fault,
    on_fault,
};
