#include "line.h"

static void push(cw_line *line, char c) {
    if (line->len < CW_LINE_CAPACITY) {
        line->text[line->len] = c;
        line->len++;
    } else {
        line->truncated = true;
    }
}

void line_str(cw_line *line, const char *text) {
    while (*text != '\0') {
        push(line, *text);
        text++;
    }
}

void line_start(cw_line *line, const char *text) {
    line->len = 0u;
    line->truncated = false;
    line_str(line, text);
}

void line_int(cw_line *line, int64_t value) {
    /* 20 digits hold 2^64; the magnitude as unsigned so INT64_MIN has one too */
    char digits[20];
    uint32_t n = 0u;
    uint64_t magnitude = (value < 0) ? (0u - (uint64_t)value) : (uint64_t)value;
    do {
        digits[n] = (char)('0' + (int)(magnitude % 10u));
        magnitude /= 10u;
        n++;
    } while (magnitude != 0u && n < 20u);
    if (value < 0) {
        push(line, '-');
    }
    while (n > 0u) {
        n--;
        push(line, digits[n]);
    }
}

void line_field(cw_line *line, int64_t value) {
    push(line, ',');
    line_int(line, value);
}

void line_empty_field(cw_line *line) { push(line, ','); }

static void key(cw_line *line, const char *name) {
    push(line, ',');
    line_str(line, name);
    push(line, '=');
}

void line_key_int(cw_line *line, const char *name, int64_t value) {
    key(line, name);
    line_int(line, value);
}

static void hex_digits(cw_line *line, uint32_t value, uint32_t digits) {
    static const char HEX[] = "0123456789abcdef";
    while (digits > 0u) {
        digits--;
        push(line, HEX[(value >> (4u * digits)) & 0xfu]);
    }
}

void line_key_hex32(cw_line *line, const char *name, uint32_t value) {
    key(line, name);
    line_str(line, "0x");
    hex_digits(line, value, 8u);
}

void line_key_bytes(cw_line *line, const char *name, const uint8_t *bytes, uint32_t len) {
    uint32_t i;
    key(line, name);
    for (i = 0u; i < len; i++) {
        hex_digits(line, bytes[i], 2u);
    }
}

const char *line_text(cw_line *line) {
    line->text[line->len] = '\0';
    return line->text;
}
