/* chain_run.c: the normalised chain text, scratch memory and chain_apply. */
#include "perturb/chain.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/numfmt.h"
#include "harness/base/textbuf.h"
#include "perturb/stage.h"

/* ---- normalised text ---------------------------------------------------- */

/* Round-trip text of v (harness/base/numfmt.h). */
static void put_number(struct textbuf *b, double v)
{
    char tmp[NUMFMT_LEN];
    textbuf_put(b, "%s", numfmt(tmp, v));
}

static int list_empty(const uint64_t *l)
{
    return !(l[0] | l[1] | l[2] | l[3]);
}

static void put_value(struct textbuf *b, const struct stage *st, size_t k)
{
    const struct chain_param_info *pi = &st->def->info.params[k];
    if (pi->kind == CHAIN_LIST) {
        const char *sep = "";
        for (int v = 0; v < 256; v++)
            if (st->list[v / 64] >> (v % 64) & 1) {
                textbuf_put(b, "%s%d", sep, v);
                sep = "/";
            }
    } else if (pi->kind == CHAIN_CHOICE) {
        const char *c = pi->choices;
        for (int idx = 0; idx < (int)st->v[k] && strchr(c, '|'); idx++) c = strchr(c, '|') + 1;
        textbuf_put(b, "%.*s", (int)strcspn(c, "|"), c);
    } else if (st->random >> k & 1) {
        textbuf_put(b, "random");
    } else {
        put_number(b, st->v[k]);
    }
}

static int is_default(const struct stage *st, size_t k)
{
    const struct chain_param_info *pi = &st->def->info.params[k];
    if (pi->kind == CHAIN_LIST) return list_empty(st->list);
    int rnd = (int)(st->random >> k & 1);
    if (rnd != pi->def_random) return 0;
    return rnd || st->v[k] == pi->def;
}

/* full: every parameter with its unit (an empty list, which has no text,
 * left out); else only those differing from their defaults, no units. */
static size_t chain_print(const struct chain *ch, char *buf, size_t n, int full)
{
    struct textbuf b = textbuf_init(buf, n);
    for (size_t i = 0; i < ch->n; i++) {
        const struct stage *st = &ch->st[i];
        textbuf_put(&b, "%s%s", i ? "+" : "", st->def->info.name);
        char sep = ':';
        for (size_t k = 0; k < st->def->info.n_params; k++) {
            const struct chain_param_info *pi = &st->def->info.params[k];
            if (full ? pi->kind == CHAIN_LIST && list_empty(st->list) : is_default(st, k)) continue;
            textbuf_put(&b, "%c%s=", sep, pi->key);
            put_value(&b, st, k);
            if (full && pi->kind == CHAIN_NUM && !(st->random >> k & 1)) textbuf_put(&b, "%s", pi->unit);
            sep = ',';
        }
    }
    return b.len;
}

size_t chain_format(const struct chain *ch, char *buf, size_t n) { return chain_print(ch, buf, n, 0); }
size_t chain_format_full(const struct chain *ch, char *buf, size_t n) { return chain_print(ch, buf, n, 1); }

/* ---- scratch and stats -------------------------------------------------- */

void chain_scratch_init(struct chain_scratch *s)
{
    cloud_init(&s->tmp);
    s->buf = NULL;
    s->buf_bytes = 0;
}

void chain_scratch_free(struct chain_scratch *s)
{
    cloud_free(&s->tmp);
    free(s->buf);
    s->buf = NULL;
    s->buf_bytes = 0;
}

void chain_stats_add(struct chain_stats *dst, const struct chain_stats *src)
{
    if (src->n_stages > dst->n_stages) dst->n_stages = src->n_stages;
    for (size_t i = 0; i < src->n_stages && i < CHAIN_MAX_STAGES; i++) {
        dst->in[i] += src->in[i];
        dst->out[i] += src->out[i];
    }
}

/* ---- apply -------------------------------------------------------------- */

int chain_apply(const struct chain *ch, struct cloud *c, uint64_t run_seed, uint32_t scan_index,
                struct chain_scratch *s, struct chain_stats *stats, struct err *e)
{
    return chain_apply_set(ch, c, run_seed, 0, scan_index, s, stats, e);
}

int chain_apply_set(const struct chain *ch, struct cloud *c, uint64_t run_seed, uint32_t set,
                    uint32_t scan_index, struct chain_scratch *s, struct chain_stats *stats,
                    struct err *e)
{
    if (set == UINT32_MAX) return err_set(e, "chain: set number %u is reserved", set);
    uint64_t key = (uint64_t)set << 32 | scan_index;   /* never RNG_RECORDING */
    if (stats) {
        memset(stats, 0, sizeof *stats);
        stats->n_stages = ch->n;
    }
    for (size_t i = 0; i < ch->n; i++) {
        const struct stage *st = &ch->st[i];
        struct rng r;
        rng_seed(&r, run_seed, st->per_recording ? RNG_RECORDING : key, i);
        size_t in = c->n;
        if (st->def->apply(st, c, &r, s, e)) {
            if (e) {
                char what[ERR_MSG_MAX];
                snprintf(what, sizeof what, "%s", e->msg);
                err_set(e, "chain stage %zu (%s): %s", i + 1, st->def->info.name, what);
            }
            return -1;
        }
        if (stats) {
            stats->in[i] = in;
            stats->out[i] = c->n;
        }
    }
    return 0;
}

/* ---- helpers for the stage files ---------------------------------------- */

double stage_value(const struct stage *st, int k, struct rng *r, double lo, double hi)
{
    if (!(st->random >> k & 1)) return st->v[k];
    return lo + (hi - lo) * rng_uniform(r);
}

void *stage_buf(struct chain_scratch *s, size_t bytes)
{
    if (bytes <= s->buf_bytes) return s->buf;
    size_t want = s->buf_bytes ? s->buf_bytes : 4096;
    while (want < bytes) want *= 2;
    void *p = realloc(s->buf, want);
    if (!p) return NULL;
    s->buf = p;
    s->buf_bytes = want;
    return p;
}
