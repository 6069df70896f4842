/* One output line of integer fields, formatted by hand (no printf): the host test and the
 * firmware print through this same code, so a difference between their outputs can only come
 * from the numbers. Text that does not fit is dropped and the line marked truncated. */
#ifndef CW_EXAMPLE_LINE_H
#define CW_EXAMPLE_LINE_H

#include <stdbool.h>
#include <stdint.h>

#define CW_LINE_CAPACITY 320u

typedef struct {
    char text[CW_LINE_CAPACITY + 1u];
    uint32_t len;
    bool truncated;
} cw_line;

void line_start(cw_line *line, const char *text);
void line_str(cw_line *line, const char *text);
void line_int(cw_line *line, int64_t value);
/* "," and a signed decimal */
void line_field(cw_line *line, int64_t value);
/* a lone ",": a value the estimate does not have */
void line_empty_field(cw_line *line);
/* ",name=" and a signed decimal */
void line_key_int(cw_line *line, const char *name, int64_t value);
/* ",name=0x" and eight lowercase hex digits */
void line_key_hex32(cw_line *line, const char *name, uint32_t value);
/* ",name=" and two lowercase hex digits per byte */
void line_key_bytes(cw_line *line, const char *name, const uint8_t *bytes, uint32_t len);
/* the NUL-terminated text */
const char *line_text(cw_line *line);

#endif
