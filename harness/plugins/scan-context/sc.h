/* sc.h: internal interface of the Scan Context plugin.  Nothing here is
 * exported from scan-context.so; the tests and benchmarks include the .c
 * files.
 *
 *   scan_context.c  settings, the plugin table, create, describe
 *   sc_image.c      the image and ring key of one scan (sector by boundary
 *                   comparisons, no arctangent)
 *   sc_distance.c   the shift-searched column cosine distance (with
 *                   sc_kernel.h, its float pass per vector width)
 *
 * Image layout: sectors x rings floats, sector-major, so one column (one
 * sector, every ring) is contiguous:
 *
 *   desc: | s0: r0 r1 .. rR-1 | s1: r0 r1 .. | ... | sS-1: ... |
 */
#ifndef RV_SC_H
#define RV_SC_H

#include <stddef.h>
#include <stdint.h>

#define SC_MAX_RINGS 200
#define SC_MAX_SECTORS 720
/* Fine azimuth bins of the sector finder per sector (see sc_image.c); a
 * table entry is a sector, with SC_FINE_TEST set near a boundary. */
#define SC_FINE_PER_SECTOR 64
#define SC_FINE_TEST 0x8000u

struct sc;
typedef void (*sc_image_fn)(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key);
typedef double (*sc_pair_fn)(int rings, int sectors, const float *a, const float *b, int32_t *aux);
typedef void (*sc_many_fn)(int rings, int sectors, const float *a, const float *const *b, size_t n,
                           double *out, int32_t *aux);

struct sc {
    int rings, sectors;
    double max_range_m, lift_m;
    /* Sector finder: boundary s is the direction of azimuth -pi + 2 pi s / S
     * (bx, by; entry S repeats entry 0); fine[f] is the sector of fine bin f
     * of the pseudo-angle. */
    double bx[SC_MAX_SECTORS + 1], by[SC_MAX_SECTORS + 1];
    uint16_t fine[SC_FINE_PER_SECTOR * SC_MAX_SECTORS];
    double fine_scale;  /* fine bins per pseudo-angle unit */
    double ring_scale;  /* rings / max_range_m */
    sc_pair_fn pair;    /* the distance kernel this CPU runs */
    sc_many_fn many;    /* the same, one query against many */
    sc_image_fn image;  /* the image kernel this CPU runs */
};

/* Fill the sector finder's tables of s (rings, sectors set).  Cannot fail. */
void sc_sector_init(struct sc *s);
/* Sector (0..S-1) of the point (x, y); see sc_image.c for the rule. */
int sc_sector_of(const struct sc *s, float x, float y);
/* The image (rings x sectors floats) and the ring key (rings floats) of n
 * points xyzi, with s->image.  Cannot fail.  The two kernels give identical
 * images; the second needs AVX2. */
void sc_image(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key);
void sc_image_base(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key);
void sc_image_avx2(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key);
sc_image_fn sc_image_pick(void);

/* The distance kernels: identical results, the avx2 ones need AVX2 and
 * FMA.  None can fail; aux (may be NULL) receives the best shift.  The
 * _many forms give out[t] (and aux[t]) for a against b[t], t < n, each what
 * the _pair form gives, with the query prepared once. */
double sc_pair_base(int rings, int sectors, const float *a, const float *b, int32_t *aux);
double sc_pair_avx2(int rings, int sectors, const float *a, const float *b, int32_t *aux);
void sc_many_base(int rings, int sectors, const float *a, const float *const *b, size_t n, double *out,
                  int32_t *aux);
void sc_many_avx2(int rings, int sectors, const float *a, const float *const *b, size_t n, double *out,
                  int32_t *aux);
/* The kernels to use on this CPU. */
sc_pair_fn sc_pair_pick(void);
sc_many_fn sc_many_pick(void);

#endif
