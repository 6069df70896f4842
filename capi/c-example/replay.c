/* The demo replay through the C API: device from its emitted description (checksum verified),
 * estimator new or restored, every trace sample stepped and printed, then the state record
 * saved, restored into a second estimator and saved again (the same bytes). */
#include "demo.h"
#include "line.h"

/* Storage of the caller: static, so the stack stays small on the smallest part. */
static cw_device device;
static cw_estimator estimator;
static cw_estimator restored;
static cw_line line;
static uint8_t record[CW_RECORD_LEN];
static uint8_t record_again[CW_RECORD_LEN];

static int32_t fail(cw_emit_fn emit, void *context, const char *what, int64_t sample, cw_status status) {
    line_start(&line, "error,at=");
    line_str(&line, what);
    line_key_int(&line, "sample", sample);
    line_key_int(&line, "status", status);
    line_str(&line, ",message=");
    line_str(&line, cw_status_message(status));
    emit(line_text(&line), context);
    return status;
}

static void estimate_line(uint32_t sample, uint8_t valid_mask, const cw_estimate *e) {
    line_start(&line, "est");
    line_field(&line, sample);
    line_field(&line, valid_mask);
    if ((e->present & CW_HAS_TORQUE) != 0u) {
        line_field(&line, e->torque_q12);
    } else {
        line_empty_field(&line);
    }
    if ((e->present & CW_HAS_HOLDING_CAPACITY) != 0u) {
        line_field(&line, e->holding_capacity_q12);
    } else {
        line_empty_field(&line);
    }
    line_field(&line, e->uncertainty_q12);
    line_field(&line, e->mu_q30);
    line_field(&line, e->effective_radius_q24);
    line_field(&line, e->clamp_force_q8);
    line_field(&line, e->force_channels_used);
    line_field(&line, e->lining_temperature_q16);
    line_field(&line, e->bedding_q30);
    line_field(&line, e->wear_q24);
    line_field(&line, e->correction_q30);
    line_field(&line, e->state);
    line_field(&line, e->flags);
}

static bool same_bytes(const uint8_t *a, const uint8_t *b, uint32_t len) {
    uint32_t i;
    for (i = 0u; i < len; i++) {
        if (a[i] != b[i]) {
            return false;
        }
    }
    return true;
}

int32_t cw_demo_replay(cw_emit_fn emit, void *context) {
    cw_status status;
    uint32_t checksum = 0u;
    uint8_t channels = 0u;
    uint32_t k;
    bool start_restored = clampwise_device_desc_initial_record_len != 0u;

    emit("# clampwise-capi: an estimate, not a certified safety function; validate on the bench",
         context);
    status = CW_ABI_CHECK();
    if (status != CW_OK) {
        return fail(emit, context, "abi_check", -1, status);
    }
    status = cw_device_init(&device, &clampwise_device_desc);
    if (status != CW_OK) {
        return fail(emit, context, "device_init", -1, status);
    }
    (void)cw_device_checksum(&device, &checksum);
    (void)cw_device_channels(&device, &channels);
    if (start_restored) {
        status = cw_estimator_restore(&estimator, &device, clampwise_device_desc_initial_record,
                                      clampwise_device_desc_initial_record_len);
    } else {
        status = cw_estimator_init(&estimator, &device);
    }
    if (status != CW_OK) {
        return fail(emit, context, "estimator_start", -1, status);
    }

    line_start(&line, "# clampwise-capi,config=");
    line_str(&line, clampwise_trace_config);
    line_str(&line, ",trace=");
    line_str(&line, clampwise_trace_name);
    line_key_int(&line, "samples", clampwise_trace_len);
    line_key_int(&line, "channels", channels);
    line_key_hex32(&line, "device_crc32", checksum);
    line_key_int(&line, "capi_version", cw_version());
    line_str(&line, start_restored ? ",start=restored" : ",start=new");
    emit(line_text(&line), context);
    emit("# est,sample,valid_mask,torque_bits,holding_capacity_bits,uncertainty_bits,mu_bits,"
         "effective_radius_bits,clamp_force_bits,force_channels_used,lining_temperature_bits,"
         "bedding_bits,wear_bits,correction_bits,state,flags",
         context);

    for (k = 0u; k < clampwise_trace_len; k++) {
        cw_estimate e;
        status = cw_estimator_step(&estimator, &clampwise_trace[k], &e);
        if (status != CW_OK) {
            return fail(emit, context, "step", k, status);
        }
        estimate_line(k, clampwise_trace[k].valid_mask, &e);
        emit(line_text(&line), context);
    }

    status = cw_estimator_save(&estimator, clampwise_trace_len, record, CW_RECORD_LEN);
    if (status != CW_OK) {
        return fail(emit, context, "save", -1, status);
    }
    line_start(&line, "record");
    line_key_int(&line, "sequence", clampwise_trace_len);
    line_key_bytes(&line, "bytes", record, CW_RECORD_LEN);
    emit(line_text(&line), context);

    status = cw_estimator_restore(&restored, &device, record, CW_RECORD_LEN);
    if (status == CW_OK) {
        status = cw_estimator_save(&restored, clampwise_trace_len, record_again, CW_RECORD_LEN);
    }
    line_start(&line, "restore");
    line_key_int(&line, "status", status);
    line_key_int(&line, "same",
                 (status == CW_OK && same_bytes(record, record_again, CW_RECORD_LEN)) ? 1 : 0);
    emit(line_text(&line), context);
    return status;
}
