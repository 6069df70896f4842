/* The C host test: the demo replay through the C API on stdout (capi/ci.sh compares it with
 * the Rust host replay), and on stderr the checks of the API's error paths, each against the
 * status the header documents. Exit status 0 only when the replay ran and every check held. */
#include <stdio.h>
#include <string.h>

#include "demo.h"

static void to_stdout(const char *text, void *context) {
    (void)context;
    (void)puts(text);
}

static unsigned passed;
static unsigned failed;

static void expect(const char *what, cw_status got, cw_status want) {
    if (got == want) {
        passed++;
    } else {
        failed++;
        fprintf(stderr, "FAILED %s: status %d (%s), expected %d (%s)\n", what, (int)got,
                cw_status_message(got), (int)want, cw_status_message(want));
    }
}

/* "major.minor.patch" as major << 16 | minor << 8 | patch */
static uint32_t packed_version(const char *text) {
    uint32_t packed = 0u;
    uint32_t part = 0u;
    for (; *text != '\0'; text++) {
        if (*text == '.') {
            packed = (packed << 8) | (part & 0xffu);
            part = 0u;
        } else {
            part = part * 10u + (uint32_t)(*text - '0');
        }
    }
    return (packed << 8) | (part & 0xffu);
}

/* The first n values of a description's table array, into a copy a check may change. */
static void copy_values(int32_t *to, const int32_t *from, uint32_t n) {
    uint32_t i;
    for (i = 0u; i < n; i++) {
        to[i] = from[i];
    }
}

static cw_device dev;
static cw_device other;
static cw_estimator est;
static cw_estimator never_started;

static void api_checks(void) {
    cw_device_desc desc = clampwise_device_desc;
    int32_t mu[CW_MU_TEMPERATURES_MAX * CW_MU_SPEEDS_MAX];
    int32_t speeds[CW_MU_SPEEDS_MAX];
    cw_estimate out;
    cw_inputs in = clampwise_trace[0];
    uint8_t record[CW_RECORD_LEN];
    uint32_t checksum = 0u;

    memset(&never_started, 0, sizeof never_started);
    memset(&other, 0, sizeof other);
    expect("abi check", CW_ABI_CHECK(), CW_OK);
    expect("abi check, wrong size",
           cw_abi_check((uint32_t)sizeof(cw_device_desc) + 8u, (uint32_t)sizeof(cw_device),
                        (uint32_t)sizeof(cw_estimator), (uint32_t)sizeof(cw_inputs),
                        (uint32_t)sizeof(cw_estimate)),
           CW_ERR_BUFFER);
    expect("init, NULL device", cw_device_init(NULL, &desc), CW_ERR_NULL);
    expect("init, NULL desc", cw_device_init(&dev, NULL), CW_ERR_NULL);
    expect("checksum of storage never initialised", cw_device_checksum(&other, &checksum),
           CW_ERR_NOT_INITIALISED);
    expect("estimator on a device never initialised", cw_estimator_init(&est, &other),
           CW_ERR_NOT_INITIALISED);

    desc.checksum ^= 1u;
    expect("init, checksum off by one bit", cw_device_init(&dev, &desc), CW_ERR_CHECKSUM);
    desc = clampwise_device_desc;
    copy_values(mu, desc.friction.mu.mu_q30,
                (uint32_t)desc.friction.mu.temperatures_len * desc.friction.mu.speeds_len);
    mu[0] += 1;
    desc.friction.mu.mu_q30 = mu;
    expect("init, one table bit changed", cw_device_init(&dev, &desc), CW_ERR_CHECKSUM);
    desc = clampwise_device_desc;
    desc.radius.radius_q24 = NULL;
    expect("init, radius table without its array", cw_device_init(&dev, &desc),
           CW_ERR_RADIUS_TABLE);
    desc = clampwise_device_desc;
    desc.channels = 5u;
    expect("init, 5 channels", cw_device_init(&dev, &desc), CW_ERR_CHANNELS);
    desc = clampwise_device_desc;
    desc.radius.forces_len = CW_RADIUS_FORCES_MAX + 1u;
    expect("init, radius table beyond capacity", cw_device_init(&dev, &desc),
           CW_ERR_RADIUS_TABLE);
    desc = clampwise_device_desc;
    copy_values(speeds, desc.friction.mu.speed_q16, desc.friction.mu.speeds_len);
    speeds[1] = speeds[0];
    desc.friction.mu.speed_q16 = speeds;
    expect("init, mu breakpoints not increasing", cw_device_init(&dev, &desc), CW_ERR_MU_TABLE);
    desc = clampwise_device_desc;
    desc.radius.lever_axis = 2u;
    expect("init, unknown lever axis", cw_device_init(&dev, &desc), CW_ERR_RADIUS_TABLE);
    expect("a refused build leaves no device", cw_device_checksum(&dev, &checksum),
           CW_ERR_NOT_INITIALISED);
    expect("both lever axes in the host library",
           cw_lever_axes_supported() == 3u ? CW_OK : CW_ERR_LEVER_AXIS, CW_OK);
    desc = clampwise_device_desc;
    desc.has_adapt = 2u;
    expect("init, has_adapt = 2", cw_device_init(&dev, &desc), CW_ERR_BAD_FLAG);
    desc = clampwise_device_desc;
    desc.thermal_wear_every = 3u;
    expect("init, thermal_wear_every = 3", cw_device_init(&dev, &desc), CW_ERR_DEVICE);

    expect("init", cw_device_init(&dev, &clampwise_device_desc), CW_OK);
    expect("checksum query", cw_device_checksum(&dev, &checksum), CW_OK);
    expect("checksum is the emitted one",
           checksum == clampwise_device_desc.checksum ? CW_OK : CW_ERR_CHECKSUM, CW_OK);
    expect("checksum, NULL out", cw_device_checksum(&dev, NULL), CW_ERR_NULL);
    expect("estimator init, NULL", cw_estimator_init(NULL, &dev), CW_ERR_NULL);
    expect("step before init", cw_estimator_step(&never_started, &in, &out),
           CW_ERR_NOT_INITIALISED);
    expect("estimator init", cw_estimator_init(&est, &dev), CW_OK);
    expect("step, NULL inputs", cw_estimator_step(&est, NULL, &out), CW_ERR_NULL);
    expect("step, NULL estimate", cw_estimator_step(&est, &in, NULL), CW_ERR_NULL);
    in.valid_mask = (uint8_t)(in.valid_mask | (1u << 3));
    expect("step, a channel the device does not have", cw_estimator_step(&est, &in, &out),
           CW_ERR_INPUTS);
    in = clampwise_trace[0];
    in.present = 0x80u;
    expect("step, unknown presence bit", cw_estimator_step(&est, &in, &out), CW_ERR_INPUTS);
    expect("step", cw_estimator_step(&est, &clampwise_trace[0], &out), CW_OK);

    expect("save, short buffer", cw_estimator_save(&est, 1u, record, CW_RECORD_LEN - 1u),
           CW_ERR_BUFFER);
    expect("save, NULL", cw_estimator_save(&est, 1u, NULL, CW_RECORD_LEN), CW_ERR_NULL);
    expect("save", cw_estimator_save(&est, 1u, record, CW_RECORD_LEN), CW_OK);
    expect("restore", cw_estimator_restore(&est, &dev, record, CW_RECORD_LEN), CW_OK);
    expect("restore, short", cw_estimator_restore(&est, &dev, record, CW_RECORD_LEN - 1u),
           CW_ERR_RECORD_FORMAT);
    record[CW_RECORD_LEN - 10u] ^= 0x40u;
    expect("restore, one bit flipped", cw_estimator_restore(&est, &dev, record, CW_RECORD_LEN),
           CW_ERR_RECORD_FORMAT);

    expect("message of CW_OK", strcmp(cw_status_message(CW_OK), "ok") == 0 ? CW_OK : CW_ERR_NULL,
           CW_OK);
    expect("message of an unknown code",
           strcmp(cw_status_message(999), "unknown status") == 0 ? CW_OK : CW_ERR_NULL, CW_OK);
    expect("version number matches the version string",
           cw_version() == packed_version(cw_version_string()) ? CW_OK : CW_ERR_NULL, CW_OK);
}

int main(void) {
    int32_t status;
    api_checks();
    status = cw_demo_replay(to_stdout, NULL);
    fprintf(stderr, "capi host api checks: %u passed, %u failed\n", passed, failed);
    return (status == CW_OK && failed == 0u) ? 0 : 1;
}
