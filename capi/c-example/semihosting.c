#include "semihosting.h"

#include <stdint.h>

#define SYS_OPEN 0x01u
#define SYS_WRITE 0x05u
#define SYS_EXIT 0x18u
/* SYS_OPEN mode "w": ":tt" opened for writing is the host's standard output */
#define OPEN_MODE_W 4u
#define ADP_STOPPED_APPLICATION_EXIT 0x20026u
#define ADP_STOPPED_RUN_TIME_ERROR 0x20023u

static uint32_t call(uint32_t op, const void *argument) {
    register uint32_t r0 __asm("r0") = op;
    register const void *r1 __asm("r1") = argument;
    __asm volatile("bkpt 0xab" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

/* -1 until the first write opens standard output */
static int32_t stdout_handle = -1;

void semihosting_write(const char *text) {
    uint32_t len = 0u;
    uint32_t args[3];
    if (stdout_handle < 0) {
        args[0] = (uint32_t)(uintptr_t)":tt";
        args[1] = OPEN_MODE_W;
        args[2] = 3u;
        stdout_handle = (int32_t)call(SYS_OPEN, args);
    }
    while (text[len] != '\0') {
        len++;
    }
    args[0] = (uint32_t)stdout_handle;
    args[1] = (uint32_t)(uintptr_t)text;
    args[2] = len;
    (void)call(SYS_WRITE, args);
}

void semihosting_exit(bool success) {
    /* On 32-bit ARM the argument is the reason itself: an application exit is status 0 in
     * QEMU, any other reason status 1. */
    (void)call(SYS_EXIT,
               (const void *)(uintptr_t)(success ? ADP_STOPPED_APPLICATION_EXIT
                                                 : ADP_STOPPED_RUN_TIME_ERROR));
    for (;;) {
    }
}
