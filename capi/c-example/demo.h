/* The generated inputs of the demo replay: the device (clampwise tables --emit-c) and the
 * trace (the c_fixture example), and the replay that steps one through the other. */
#ifndef CW_EXAMPLE_DEMO_H
#define CW_EXAMPLE_DEMO_H

#include "clampwise.h"

/* device.c, from `clampwise tables --emit-c` */
extern const cw_device_desc clampwise_device_desc;
extern const uint32_t clampwise_device_desc_initial_record_len;
extern const uint8_t clampwise_device_desc_initial_record[CW_RECORD_LEN];

/* trace.c, from the c_fixture example */
extern const char clampwise_trace_config[];
extern const char clampwise_trace_name[];
extern const uint32_t clampwise_trace_len;
extern const cw_inputs clampwise_trace[];

/* Where the replay's lines go (stdout on the host, semihosting on the target). */
typedef void (*cw_emit_fn)(const char *text, void *context);

/* Replay the trace through the C API and emit every line (the format of the Rust host replay
 * the C checks compare with). Returns 0, or the first cw_status that was not CW_OK. */
int32_t cw_demo_replay(cw_emit_fn emit, void *context);

#endif
