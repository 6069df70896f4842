/* Start-up of the C example firmware (Cortex-M0+/M3/M4F): vector table, .data and .bss set-up,
 * the FPU switched on where there is one, then main. Faults end the run with a failure status. */
#include <stdint.h>

#include "semihosting.h"

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss, _stack_top;
int main(void);
void cw_reset(void);

static void on_fault(void) { semihosting_exit(false); }

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
