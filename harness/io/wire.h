/* wire.h: a bounds-checked cursor over one serialised robot message.
 *
 * Two encodings share the cursor, so each message type is decoded once:
 *   WIRE_ROS1  ROS 1 serialisation: little-endian, packed (no padding);
 *              a string or an array is a uint32 count, then the items
 *   WIRE_CDR   OMG CDR as ROS 2 writes it: a 4-byte encapsulation header
 *              (0x00 0x00 big-endian or 0x00 0x01 little-endian, then two
 *              option bytes), each primitive aligned to its size counted
 *              from the end of that header; a string is a uint32 length
 *              that includes a final NUL, then the bytes
 *
 *     struct wire w;
 *     if (wire_begin(&w, data, len, WIRE_CDR, e)) return -1;
 *     uint32_t n; double v;
 *     if (wire_u32(&w, &n, e) || wire_f64(&w, &v, e)) return -1;
 *
 * Failure contract: each read returns 0, or -1 with "at byte B of N: what,
 * expected what" in e when the bytes run out or a value is malformed; the
 * cursor then stays where it was.  The caller prefixes file and message.
 * The cursor only borrows data.  No state; thread-safe on distinct cursors.
 */
#ifndef RV_WIRE_H
#define RV_WIRE_H

#include <stddef.h>
#include <stdint.h>

#include "harness/base/err.h"

enum wire_kind { WIRE_ROS1 = 0, WIRE_CDR };

struct wire {
    const unsigned char *p;  /* message bytes */
    size_t len, pos;         /* total, next byte */
    size_t origin;           /* alignment is counted from here (CDR) */
    enum wire_kind kind;
    int big;                 /* 1: big-endian values */
};

/* Start at data[0]; for WIRE_CDR read and check the encapsulation header. */
int wire_begin(struct wire *w, const void *data, size_t len, enum wire_kind kind, struct err *e);

int wire_u8(struct wire *w, uint8_t *v, struct err *e);
int wire_u32(struct wire *w, uint32_t *v, struct err *e);
int wire_i32(struct wire *w, int32_t *v, struct err *e);
int wire_f64(struct wire *w, double *v, struct err *e);
/* A string into out (size n, NUL-terminated); longer strings are refused. */
int wire_str(struct wire *w, char *out, size_t n, struct err *e);
/* A count of items of item_size bytes each, checked against the bytes left
 * (after alignment to item_align); the cursor is left at the first item. */
int wire_count(struct wire *w, size_t item_size, size_t item_align, uint32_t *n, struct err *e);
/* Borrow n raw bytes (a uint8 array's body). */
int wire_bytes(struct wire *w, size_t n, const unsigned char **out, struct err *e);
/* A stamp: ROS 1 time (uint32 sec, uint32 nsec) or ROS 2 Time (int32 sec,
 * uint32 nanosec), as seconds; nsec above 999999999 is refused. */
int wire_time(struct wire *w, double *t, struct err *e);

#endif
