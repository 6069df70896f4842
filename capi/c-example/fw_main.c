/* The C example firmware: the demo replay through the C API, each line over semihosting (QEMU
 * prints it; capi/ci.sh compares it with the Rust host replay). The exit status is the replay's; a last
 * "#target" line gives the stack the run used. */
#include "demo.h"
#include "line.h"
#include "semihosting.h"

/* The replay's second line comes right after the device build and the estimator start: the
 * stack they used is measured there, and the RAM painted again for the steps and records. */
static uint32_t lines;
static uint32_t init_stack;

static void to_semihosting(const char *text, void *context) {
    (void)context;
    semihosting_write(text);
    semihosting_write("\n");
    lines++;
    if (lines == 2u) {
        init_stack = stack_used();
        stack_paint();
    }
}

/* Target-only measurements start "#target" (the comparison leaves them out). */
int main(void) {
    static cw_line line;
    int32_t status = cw_demo_replay(to_semihosting, 0);
    line_start(&line, "#target stack");
    line_key_int(&line, "init_bytes", init_stack);
    line_key_int(&line, "steps_and_records_bytes", stack_used());
    line_key_int(&line, "device_storage", (int64_t)sizeof(cw_device));
    line_key_int(&line, "estimator_storage", (int64_t)sizeof(cw_estimator));
    to_semihosting(line_text(&line), 0);
    return (status == CW_OK) ? 0 : 1;
}
