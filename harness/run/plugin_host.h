/* plugin_host.h: load a descriptor method and run it under checks.
 *
 * A method spec is "NAME[:key=value,...]" or "PATH[:key=value,...]".
 * NAME is looked up as NAME.so in, in this order: the folders of
 * search_path (':'-separated, from --plugin-path), the folders of the
 * environment variable REVISIT_PLUGIN_PATH, then the install folder
 * RV_PLUGIN_DIR.  A PATH (anything with a '/') ending in ".so" is loaded
 * as a plugin; any other PATH is started as an external program speaking
 * the protocol of harness/run/external.h (its settings become its arguments).
 *
 *     struct plugin p;
 *     if (plugin_open(&p, "scan-context:rings=20", NULL, e)) return -1;
 *     float *d = malloc(p.dim * sizeof *d), *k = malloc(p.key_dim * sizeof *k);
 *     if (plugin_describe(&p, &scan, d, k, e)) ...   // e names method and scan
 *     plugin_close(&p);
 *
 * Every output is checked: the plugin must write exactly dim (key_dim)
 * floats (guard words after the buffers catch overruns), all finite, and a
 * scan must take at most time_limit_s seconds.  plugin_describe is safe to
 * call from several threads only when (p.flags & RV_FLAG_THREAD_SAFE) and
 * the method is not external; otherwise the caller serialises.
 */
#ifndef RV_PLUGIN_HOST_H
#define RV_PLUGIN_HOST_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "harness/revisit_plugin.h"

#define PLUGIN_MAX_SETTINGS 32
#define PLUGIN_MAX_DIM (1u << 22)   /* refuse descriptors larger than this */
#define PLUGIN_TIME_LIMIT_S 60.0    /* default per-scan limit */

struct external;

struct plugin {
    char name[64];          /* method name (table or hello) */
    char version[32];
    char label[1024];       /* "name:key=value,..." with every setting spelled out */
    char path[4096];        /* the .so or the program */
    const struct rv_method *m;   /* NULL for an external program */
    void *so;               /* dlopen handle or NULL */
    struct external *ext;   /* external program or NULL */
    void *inst;
    double values[PLUGIN_MAX_SETTINGS];
    uint32_t dim, key_dim;
    enum rv_distance distance;
    uint32_t flags;
    double time_limit_s;    /* per scan, 0 = no limit */
    int guard;              /* plugin_guard slot while a .so is open, else 0 */
    uint64_t digest;        /* content hash of the .so or the program file */
};

/* Find, load, validate and instantiate.  0, or -1 with e set and p left
 * closed (nothing to free). */
int plugin_open(struct plugin *p, const char *spec, const char *search_path, struct err *e);

/* What a method may take. time_s: seconds per scan (0: PLUGIN_TIME_LIMIT_S
 * for a .so, checked after each scan; EXTERNAL_SCAN_S for an external
 * program, which is stopped when it does not answer in time). mem_bytes:
 * the address space of an external program (0: none); a .so runs in the
 * host and is limited only when isolated (eval_spec.isolate). */
struct plugin_limits {
    double time_s;
    size_t mem_bytes;
};

/* The content hash of the file spec names (the .so or the program), as
 * plugin_open would find it; what p.digest holds after plugin_open. 0 or -1. */
int plugin_file_digest(const char *spec, const char *search_path, uint64_t *digest, struct err *e);

/* plugin_open under lim (NULL: the defaults). */
int plugin_open_limits(struct plugin *p, const char *spec, const char *search_path,
                       const struct plugin_limits *lim, struct err *e);

/* Describe one scan into desc (dim floats) and key (key_dim floats; may be
 * NULL when key_dim is 0).  On -1, e reads
 * "method 'NAME' on scan 12: ..." and desc/key are unspecified. */
int plugin_describe(struct plugin *p, const struct rv_scan *s, float *desc, float *key,
                    struct err *e);

/* Custom distance (RV_DIST_CUSTOM only).  Cannot fail; a non-finite or
 * negative value from the plugin is returned as +inf. */
double plugin_distance(const struct plugin *p, const float *a, const float *b, int32_t *aux);

/* Custom distances (RV_DIST_CUSTOM only) of a to b[0..n-1] into out, as
 * the plugin returns them (unchecked): its distance_batch when the table
 * has one, else distance_fn once per pair.  0, or -1 when distance_batch
 * fails: e reads "method 'NAME': distance_batch failed (status 3): ...". */
int plugin_distances(const struct plugin *p, const float *a, const float *const *b, size_t n, double *out,
                     struct err *e);

/* Sequential methods: forget carried state.  No-op for others. */
void plugin_reset(struct plugin *p);

/* Destroy the instance, unload / stop.  Accepts a closed plugin. */
void plugin_close(struct plugin *p);

/* The folders of the search order above, ':'-joined, empty and repeated
 * ones left out, into out.  0, or -1 when out is too small. */
int plugin_search_order(const char *search_path, char *out, size_t n, struct err *e);

/* Resolve NAME to a .so path through the search order above.  0 or -1; the
 * message names the folders searched and the nearest names found there
 * ("did you mean 'scan-context'?"). */
int plugin_find(const char *name, const char *search_path, char *out, size_t n, struct err *e);

/* One method found on the search path, for `revisit methods`. */
struct plugin_info {
    char name[64];
    char path[4096];
};

/* Every NAME.so in the search order (first of each name wins), sorted by
 * name.  *out is malloc'ed; the caller frees.  0 or -1. */
int plugin_list(const char *search_path, struct plugin_info **out, size_t *n, struct err *e);

/* Load a .so and return its checked table without creating an instance;
 * *so must be closed with plugin_unload.  0 or -1. */
int plugin_load_table(const char *path, void **so, const struct rv_method **m, struct err *e);
void plugin_unload(void *so);

/* The text of a setting's default or value ("20", "0.5", "true", "cosine")
 * into out. */
void plugin_setting_text(const struct rv_setting *s, double v, char *out, size_t n);

/* The methods loaded into this process (plugin_guard.c). plugin_open
 * enters every .so it opens and plugin_close leaves it; while one is open,
 * a call of exit() (by the plugin or anyone) prints "revisit: method 'NAME'
 * (PATH) ended the process (exit) while it was running; ..." and ends the
 * process with status 2, never 0. Enter returns a slot (0 when the table is
 * full: that method is then not named); leave accepts 0. Thread-safe. */
int plugin_guard_enter(const char *name, const char *path);
void plugin_guard_leave(int slot);

/* Install handlers that, if the process dies of SIGSEGV, SIGBUS, SIGFPE,
 * SIGILL or SIGABRT, print "revisit: method 'NAME' (PATH) crashed with a
 * fatal signal (SIGABRT) ..." naming every method open at that moment, then
 * die of the signal. Process-wide; calling it again changes nothing. */
void plugin_crash_notice(void);

#endif
