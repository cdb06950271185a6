/* revisit_plugin.h: the public interface for descriptor methods (ABI 1).
 *
 * OVERVIEW
 * A descriptor method turns one LiDAR scan into a fixed-length float vector;
 * revisit compares vectors to find revisited places.  A method is a shared
 * object exporting one function, RV_ENTRY ("rv_method_entry"), that returns a
 * pointer to a constant `struct rv_method` table.  The table says who the
 * method is (name, version), what it can be set to (a settings schema), how
 * its vectors are compared (L2, cosine, or a custom distance), and holds the
 * lifecycle functions.  This header is all a plugin may include from revisit;
 * the host exports no other symbol.
 *
 * CALL ORDER
 *   entry()            once, after dlopen; the table must stay valid until dlclose
 *   create(values)     once per setting variant; returns an opaque instance
 *   describe(inst, s)  once per scan; writes dim floats (and key_dim key floats)
 *   reset(inst)        (sequential methods) before the first scan of each sequence
 *   distance(...)      (custom distance only) any number of times, any thread;
 *                      distance_batch, when given, for one query against many
 *   destroy(inst)      once
 *
 * OWNERSHIP
 * The host owns every buffer: the scan arrays are valid only during the
 * describe call; `desc` and `key` are host memory of dim and key_dim floats.
 * The instance is the plugin's; the host never reads it.
 *
 * THREADS
 * With RV_FLAG_THREAD_SAFE, describe may run on several threads at once on
 * one instance.  Without it, calls are serialised.  distance must always be
 * safe to call concurrently (it gets a const instance).
 *
 * ERRORS
 * Functions that can fail return RV_OK or another rv_status and may write a
 * one-line reason into msg (msg_len bytes, always NUL-terminate).  The host
 * validates everything returned (dimension, NaN/Inf, time) and names the
 * method and the scan in its error.
 *
 * VERSIONING
 * abi_version must equal RV_ABI_VERSION; struct_size is sizeof(struct
 * rv_method) as the plugin was built.  Members are only ever appended; the
 * host reads nothing beyond struct_size, so a plugin built before a member
 * was appended keeps working without it (distance_batch came after reset).
 * A table may also stop before trailing optional members (they are then
 * NULL); with -Wextra, -Wno-missing-field-initializers quiets the warning.
 *
 * EXAMPLE (a whole plugin)
 *     #include "revisit_plugin.h"
 *     static const struct rv_setting set[] = {
 *         {"bins", RV_SET_INT, 16, 1, 256, NULL, "number of range bins"}};
 *     static int mk(const double *v, void **inst, uint32_t *dim, uint32_t *kd,
 *                   char *msg, size_t len) { ...; *dim = (uint32_t)v[0]; *kd = 0; return RV_OK; }
 *     static int run(void *inst, const struct rv_scan *s, float *d, float *k,
 *                    char *msg, size_t len) { ... }
 *     static void rm(void *inst) { free(inst); }
 *     static const struct rv_method m = {RV_ABI_VERSION, sizeof m, "example", "1.0",
 *         "what it does", set, 1, RV_DIST_L2, RV_FLAG_THREAD_SAFE, mk, run, rm, NULL, NULL};
 *     RV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }
 */
#ifndef REVISIT_PLUGIN_H
#define REVISIT_PLUGIN_H

#include <stddef.h>
#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

#define RV_ABI_VERSION 1u
#define RV_ENTRY "rv_method_entry"
#define RV_EXPORT __attribute__((visibility("default")))

/* Status codes returned by plugin functions. */
enum rv_status {
    RV_OK = 0,        /* success */
    RV_ERR_INPUT = 1, /* the scan or settings cannot be handled (msg says why) */
    RV_ERR_NOMEM = 2, /* an allocation failed */
    RV_ERR_INTERNAL = 3 /* a bug or an unexpected state in the plugin */
};

/* How two descriptors are compared when no custom distance is given. */
enum rv_distance {
    RV_DIST_L2 = 0,     /* Euclidean distance */
    RV_DIST_COSINE = 1, /* 1 - cos(a, b) */
    RV_DIST_CUSTOM = 2  /* the table's distance function */
};

enum rv_setting_type {
    RV_SET_INT = 0,    /* whole number in [min, max] */
    RV_SET_FLOAT = 1,  /* real number in [min, max] */
    RV_SET_BOOL = 2,   /* 0 or 1; written true/false/0/1 */
    RV_SET_CHOICE = 3  /* index into `choices`, a '|'-separated list of words */
};

/* One entry of a method's settings schema. */
struct rv_setting {
    const char *key;            /* lower-case, e.g. "rings" */
    enum rv_setting_type type;
    double def, min, max;       /* default and inclusive range (CHOICE: index) */
    const char *choices;        /* CHOICE only: "cosine|l2"; else NULL */
    const char *help;           /* one line */
};

/* Flags. */
#define RV_FLAG_THREAD_SAFE 1u  /* describe may run concurrently on one instance */
#define RV_FLAG_SEQUENTIAL  2u  /* keeps state across consecutive scans; see reset */

/* One scan as the host hands it over.  Point k is xyzi[4k..4k+3] =
 * x, y, z (metres, sensor frame, z up) and intensity. */
struct rv_scan {
    size_t n;                 /* number of points */
    const float *xyzi;        /* 4 * n floats */
    const uint16_t *ring;     /* n channel indices, or NULL */
    const float *time;        /* n seconds from sweep start, or NULL */
    double stamp;             /* scan timestamp, seconds */
    uint32_t index;           /* scan index within its recording */
    uint32_t sequence;        /* which recording / sequence (0 map, 1 query) */
};

struct rv_method {
    uint32_t abi_version;     /* RV_ABI_VERSION */
    uint32_t struct_size;     /* sizeof(struct rv_method) */
    const char *name;         /* "scan-context"; lower-case, no spaces */
    const char *version;      /* the method's own version, "1.0" */
    const char *summary;      /* one line, with the published source */
    const struct rv_setting *settings;
    uint32_t n_settings;
    enum rv_distance distance;
    uint32_t flags;

    /* values[k] is setting k (schema order), validated against its range.
     * Sets *inst, *dim (> 0) and *key_dim (0 = no prefilter key). */
    int (*create)(const double *values, void **inst, uint32_t *dim,
                  uint32_t *key_dim, char *msg, size_t msg_len);
    /* Write dim floats to desc and, when key_dim > 0, key_dim floats to key.
     * An empty scan (n = 0) must still give a defined descriptor. */
    int (*describe)(void *inst, const struct rv_scan *scan, float *desc,
                    float *key, char *msg, size_t msg_len);
    /* Free the instance; accepts NULL. */
    void (*destroy)(void *inst);

    /* Optional (NULL when absent). */
    /* RV_DIST_CUSTOM: distance of two descriptors, >= 0 (+inf: never a
     * match), smaller is closer; a negative or NaN value stops the run with
     * an error naming the method, the query and the candidate.
     * aux, when not NULL, receives a method-specific integer (Scan Context:
     * the best column shift). Keys are compared by L2 for the prefilter. */
    double (*distance_fn)(const void *inst, const float *a, const float *b, int32_t *aux);
    /* RV_FLAG_SEQUENTIAL: forget the state carried from previous scans. */
    void (*reset)(void *inst);

    /* Appended later in ABI 1: the host reads it only when struct_size
     * covers it; NULL when absent (the host then calls distance_fn per pair).
     * RV_DIST_CUSTOM: the distances of a to each of the n descriptors
     * b[0..n-1] into out[0..n-1] (aux, when not NULL, n integers as
     * distance_fn's), each exactly what distance_fn gives for that pair; a
     * method uses it to prepare a once for all its candidates.  RV_OK, or
     * another rv_status with a reason in msg.  Safe to call concurrently. */
    int (*distance_batch)(const void *inst, const float *a, const float *const *b, size_t n,
                          double *out, int32_t *aux, char *msg, size_t msg_len);
};

typedef const struct rv_method *(*rv_entry_fn)(void);

#ifdef __cplusplus
}
#endif
#endif
