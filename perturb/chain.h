/* chain.h: perturbation chains, parsed once and applied to many scans.
 *
 * A chain is stages joined by '+'; a stage is `name` or `name:key=value,...`:
 *
 *     yaw:deg=random+sector:width=90+dropout:p=0.3+range:max=40m
 *
 * Values are numbers with an optional unit where one fits (`90deg`, `40m`,
 * `2m/s`, `10deg/s`, `0.1s`), the word `random` where a parameter may be drawn
 * per scan, a word from a short list (`draw=scan|recording`,
 * `mode=ray|xyz`), or a '/'-separated list of whole numbers
 * (`channels:list=0/2/4`).  Every stage and key, with defaults and ranges, is
 * in the table chain_stage_info() walks (what `revisit perturb --list`
 * prints).  Spaces around tokens are ignored.
 *
 * Usage:
 *     struct chain *ch;
 *     if (chain_parse("yaw+sector:width=90", &ch, e)) return -1;
 *     struct chain_scratch s; chain_scratch_init(&s);
 *     for each scan k:
 *         if (chain_apply(ch, &cloud, run_seed, k, &s, NULL, e)) ...
 *     chain_scratch_free(&s); chain_free(ch);
 *
 * Seeds: each stage draws from its own xoshiro256** stream seeded through
 * SplitMix64 from (run seed, scan index, stage index), see rng.h.  A stage
 * marked `draw=recording` seeds from (run seed, stage index) only, so it
 * makes the same draw for every scan (a bracket fixed on the mount).  The
 * result is a pure function of (chain, cloud, run seed, scan index): it does
 * not depend on threads, order or earlier calls.
 *
 * Threads: a parsed chain is read-only; chain_apply may run on one chain from
 * many threads at once, each thread with its own scratch.
 *
 * Errors: functions returning int give 0 or -1; on -1 e->msg holds
 *     chain:POS: what was wrong, expected what
 *       sector:width=abc
 *                    ^
 * where POS is the 1-based character position in the chain text (parse
 * errors), or names the stage (apply errors: out of memory, a cloud too
 * large).  chain_apply leaves the cloud in an unspecified but valid state on
 * failure (it can be freed or reused).
 */
#ifndef RV_CHAIN_H
#define RV_CHAIN_H

#include <stddef.h>
#include <stdint.h>

#include "harness/base/cloud.h"
#include "harness/base/err.h"
#include "harness/base/side.h"

#define CHAIN_MAX_STAGES 32
#define CHAIN_MAX_PARAMS 8

/* ---- where a chain applies ---------------------------------------------- */

/* The sides and their words are those of harness/base/side.h. */
enum chain_on { CHAIN_ON_QUERY = SIDE_QUERY, CHAIN_ON_MAP = SIDE_MAP, CHAIN_ON_BOTH = SIDE_BOTH };

/* "query" | "map" | "both" -> *out. 0 or -1 (message lists the choices). */
int chain_on_parse(const char *text, enum chain_on *out, struct err *e);
/* The word for an enum value ("query", "map", "both"). */
const char *chain_on_name(enum chain_on on);
/* Whether a chain applied `on` touches the map set / the query set. */
int chain_on_map(enum chain_on on);
int chain_on_query(enum chain_on on);

/* ---- parse, print, free ------------------------------------------------- */

struct chain;   /* opaque, read-only after chain_parse */

/* Parse text into a new chain (*out; the caller frees with chain_free).
 * 0, or -1 with *out = NULL and the message pointing at the bad character. */
int chain_parse(const char *text, struct chain **out, struct err *e);
/* Accepts NULL. */
void chain_free(struct chain *ch);

/* A new chain: ch (NULL: the empty chain) with parameter key of stage set
 * to value, in the first stage of that name, or in that stage appended with
 * its defaults when ch has none.  The value is checked as the parser checks
 * one written in the text.  The caller frees *out with chain_free.  0, or -1
 * with *out = NULL and e set ("sector.width = 400 is out of range, expected
 * a number of degrees from 0 to 360"; an unknown stage or key; a chain
 * already holding CHAIN_MAX_STAGES stages). */
int chain_with_value(const struct chain *ch, const char *stage, const char *key, double value,
                     struct chain **out, struct err *e);

/* 1 when every stage of ch sits at a setting that leaves each cloud as it
 * is (today sector:width=0 and dropout:p=0, the usual first point of a
 * swept axis), so a set perturbed by ch is the unperturbed set and may
 * share its descriptors; 0 otherwise, and for the empty chain. */
int chain_is_identity(const struct chain *ch);

/* Number of stages and the name of stage i (i < count). */
size_t chain_stage_count(const struct chain *ch);
const char *chain_stage_name(const struct chain *ch, size_t i);

/* The normalised text: stages in order, parameters in table order, only
 * those differing from their defaults, units dropped (degrees, metres,
 * seconds), shortest exact number form.  Two chains that behave the same
 * print the same text, so it serves as a cache key; it parses back to an
 * equal chain.  Writes at most n bytes (NUL included) like snprintf and
 * returns the length the whole text needs. */
size_t chain_format(const struct chain *ch, char *buf, size_t n);
/* The chain in full, for people: every parameter of every stage in table
 * order, defaults included, numbers with their unit
 * ("sector:width=60deg,at=180deg,draw=recording+tilt:pitch=2deg,...");
 * an empty list is left out.  It parses back to an equal chain.  Same
 * return and truncation as chain_format. */
size_t chain_format_full(const struct chain *ch, char *buf, size_t n);

/* ---- apply -------------------------------------------------------------- */

/* Per-thread working memory, reused across scans (grows, never shrinks). */
struct chain_scratch {
    struct cloud tmp;   /* a second cloud for stages that build a new one */
    void *buf;          /* raw bytes for keys, range images, masks */
    size_t buf_bytes;
};

void chain_scratch_init(struct chain_scratch *s);
/* Accepts an initialised, never-used scratch. */
void chain_scratch_free(struct chain_scratch *s);

/* Points in and out of every stage for one chain_apply call. */
struct chain_stats {
    size_t n_stages;
    size_t in[CHAIN_MAX_STAGES], out[CHAIN_MAX_STAGES];
};

/* Add src's counts into dst (dst zeroed by the caller first, e.g. = {0}). */
void chain_stats_add(struct chain_stats *dst, const struct chain_stats *src);

/* Apply every stage in order to in_out, in place.  stats may be NULL; when
 * given it is overwritten with this scan's counts.  0 or -1 (out of memory,
 * a point too far for the density grid).  Coordinates are expected finite
 * (recording_load_scan drops the others); a non-finite one is still safe:
 * it passes through a stage or is removed by it, and density refuses it
 * with an error naming the point. */
int chain_apply(const struct chain *ch, struct cloud *in_out, uint64_t run_seed,
                uint32_t scan_index, struct chain_scratch *s,
                struct chain_stats *stats, struct err *e);

/* The same with a set number that keys the per-scan streams too:
 * (run seed, set, scan index, stage index).  Use a different set for the
 * map and the query recording of a relocalisation run with the chain on
 * both, so that map scan i and query scan i do not share their per-scan
 * draws (a random yaw would otherwise turn both alike).  Per-recording
 * draws (draw=recording) ignore the set: a fixed mount blocks the same
 * sector in both.  set 0 is exactly chain_apply; set < UINT32_MAX. */
int chain_apply_set(const struct chain *ch, struct cloud *in_out, uint64_t run_seed,
                    uint32_t set, uint32_t scan_index, struct chain_scratch *s,
                    struct chain_stats *stats, struct err *e);

/* ---- the stage table (what --list prints) -------------------------------- */

enum chain_kind {
    CHAIN_NUM,      /* a number in [min, max], with `unit` optional in the text */
    CHAIN_CHOICE,   /* one word of `choices` ("scan|recording"); value = index */
    CHAIN_LIST      /* '/'-separated whole numbers in [min, max] */
};

struct chain_param_info {
    const char *key;        /* "width" */
    enum chain_kind kind;
    const char *unit;       /* "deg", "m", "m/s", "deg/s", "s", or "" */
    double def;             /* default (a choice index for CHAIN_CHOICE) */
    double min, max;        /* closed range for numbers and list entries */
    int may_random;         /* `random` accepted (drawn per the stage's draw=) */
    int def_random;         /* the default is `random` */
    const char *choices;    /* CHAIN_CHOICE: "a|b|c"; else NULL */
    const char *expect;     /* "a number of degrees from 0 to 360" */
    const char *meaning;    /* one line */
};

struct chain_stage_info {
    const char *name;       /* "sector" */
    const char *meaning;    /* one line */
    size_t n_params;
    const struct chain_param_info *params;
};

/* Stage i of the table, or NULL past the last one. */
const struct chain_stage_info *chain_stage_info(size_t i);
/* Look a stage up by name; NULL when there is none. */
const struct chain_stage_info *chain_stage_find(const char *name);

#endif
