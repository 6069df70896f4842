/* The C example firmware: the demo replay through the C API, each line over semihosting (QEMU
 * prints it; capi/ci.sh compares it with the Rust host replay). The exit status is the replay's. */
#include "demo.h"
#include "semihosting.h"

static void to_semihosting(const char *text, void *context) {
    (void)context;
    semihosting_write(text);
    semihosting_write("\n");
}

int main(void) { return (cw_demo_replay(to_semihosting, 0) == CW_OK) ? 0 : 1; }
