/* ARM semihosting (the debugger's, or QEMU's -semihosting): text out and the exit status. */
#ifndef CW_EXAMPLE_SEMIHOSTING_H
#define CW_EXAMPLE_SEMIHOSTING_H

#include <stdbool.h>
#include <stdint.h>

void semihosting_write(const char *text);
void semihosting_exit(bool success) __attribute__((noreturn));

/* Deepest stack use since reset or the last stack_paint(), bytes (startup.c paints the free
 * RAM at reset). */
uint32_t stack_used(void);
void stack_paint(void);

#endif
