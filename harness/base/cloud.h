/* cloud.h: the point cloud every module passes around (libc only, no I/O).
 *
 * Memory layout: points are interleaved float32 records, the same 16 bytes a
 * raw scan file holds, so a raw load is one read into `pts`:
 *
 *     pts:   | x0 y0 z0 i0 | x1 y1 z1 i1 | ... |      (4 floats per point)
 *     ring:  | r0 | r1 | ... |   uint16, NULL when the scan has no channels
 *     time:  | t0 | t1 | ... |   float seconds from sweep start, NULL if absent
 *
 * Coordinates are metres in the sensor frame.  A cloud owns its arrays; one
 * owner frees it with cloud_free().  Functions returning int give 0 or -1
 * (out of memory, or a bound exceeded), and on -1 leave the cloud unchanged.
 *
 *     struct cloud c; cloud_init(&c);
 *     cloud_push(&c, 1, 2, 0, 0.5f);  ...  cloud_free(&c);
 */
#ifndef RV_CLOUD_H
#define RV_CLOUD_H

#include <stddef.h>
#include <stdint.h>

#define CLOUD_MAX_POINTS ((size_t)1 << 28)  /* refuse scans larger than this */

struct cloud {
    size_t n, cap;
    float *pts;       /* 4 * cap floats: x y z intensity */
    uint16_t *ring;   /* cap entries or NULL */
    float *time;      /* cap entries or NULL */
};

#define CLOUD_X(c, k) ((c)->pts[4 * (k)])
#define CLOUD_Y(c, k) ((c)->pts[4 * (k) + 1])
#define CLOUD_Z(c, k) ((c)->pts[4 * (k) + 2])
#define CLOUD_I(c, k) ((c)->pts[4 * (k) + 3])

void cloud_init(struct cloud *c);
/* Free the arrays and reset to empty; accepts an already-empty cloud. */
void cloud_free(struct cloud *c);
/* Make room for at least cap points (keeps contents). 0 or -1. */
int cloud_reserve(struct cloud *c, size_t cap);
/* Add the ring / time arrays (zero-filled) if missing. 0 or -1. */
int cloud_enable_ring(struct cloud *c);
int cloud_enable_time(struct cloud *c);
/* Append one point; ring/time entries, if present, are set to 0. 0 or -1. */
int cloud_push(struct cloud *c, float x, float y, float z, float i);
/* Replace dst's contents with a copy of src (dst keeps its buffers if large enough). */
int cloud_copy(struct cloud *dst, const struct cloud *src);
/* Keep point k at position n while compacting: dst index j <- src index k. */
void cloud_move(struct cloud *c, size_t j, size_t k);
/* 1 when none of the n floats at v is NaN or infinite, else 0. */
int cloud_values_finite(const float *v, size_t n);
/* Drop points with a non-finite coordinate; returns how many were dropped. */
size_t cloud_drop_nonfinite(struct cloud *c);

#endif
