/* plan.c: scenario file loader (every key checked) and grid expansion. */
#include "harness/plan/plan.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/grow.h"
#include "harness/base/json_path.h"
#include "harness/base/keyset.h"
#include "harness/base/numfmt.h"
#include "harness/base/side.h"
#include "metrics/pr.h"
#include "perturb/chain.h"

#define PLAN_FILE_MAX ((size_t)4 << 20)
#define JP 256   /* room for one JSON path */

/* Loader context: the file name and its text for messages, the error
 * record, and the names taken so far (method labels, method names,
 * condition names). */
struct pl {
    const char *file;
    struct err *e;
    const char *text;
    size_t len;
    struct keyset *methods, *method_names, *conds;
};

static int pl_fail(const struct pl *c, const char *jp, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));

static int pl_fail(const struct pl *c, const char *jp, const char *fmt, ...)
{
    char msg[ERR_MSG_MAX];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(msg, sizeof msg, fmt, ap);
    va_end(ap);
    size_t off;
    long line, col;
    if (!c->text || json_path_find(c->text, c->len, jp, &off))
        return err_at(c->e, c->file, 0, "%s: %s", jp[0] ? jp : "(top level)", msg);
    err_line_col(c->text, off, &line, &col);
    return err_set(c->e, "%s:%ld:%ld: %s: %s", c->file, line, col, jp[0] ? jp : "(top level)", msg);
}

static char *pl_dup(const char *s)
{
    if (!s) return NULL;
    size_t n = strlen(s) + 1;
    char *d = malloc(n);
    if (d) memcpy(d, s, n);
    return d;
}

/* JSON paths name places in messages; one cut to fit ends in "...". */
static void pl_join(char *out, const char *jp, const char *key)
{
    if (err_cut(snprintf(out, JP, "%s%s%s", jp, jp[0] ? "." : "", key), JP)) memcpy(out + JP - 4, "...", 4);
}

static void pl_index(char *out, const char *jp, size_t k)
{
    if (err_cut(snprintf(out, JP, "%s[%zu]", jp, k), JP)) memcpy(out + JP - 4, "...", 4);
}

/* Refuse keys outside allowed (NULL-terminated) and repeated keys. */
static int pl_keys(const struct pl *c, const cJSON *obj, const char *jp, const char *const *allowed)
{
    if (!cJSON_IsObject(obj)) return pl_fail(c, jp, "expected an object");
    for (const cJSON *it = obj->child; it; it = it->next) {
        char sub[JP];
        pl_join(sub, jp, it->string);
        int ok = 0;
        for (const char *const *a = allowed; *a; a++) ok |= !strcmp(*a, it->string);
        if (!ok) {
            char list[512] = "";
            for (const char *const *a = allowed; *a; a++)
                snprintf(list + strlen(list), sizeof list - strlen(list), "%s%s", a == allowed ? "" : ", ", *a);
            return pl_fail(c, sub, "unknown key, expected one of %s", list);
        }
        for (const cJSON *o = obj->child; o != it; o = o->next)
            if (!strcmp(o->string, it->string)) return pl_fail(c, sub, "key given twice");
    }
    return 0;
}

static const cJSON *pl_get(const cJSON *obj, const char *key)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
    return v && !cJSON_IsNull(v) ? v : NULL;
}

/* Optional number in [lo, hi]; *out untouched when absent. */
static int pl_num(const struct pl *c, const cJSON *obj, const char *jp, const char *key,
                  double lo, double hi, double *out)
{
    const cJSON *v = pl_get(obj, key);
    if (!v) return 0;
    char sub[JP];
    pl_join(sub, jp, key);
    if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) return pl_fail(c, sub, "expected a number");
    if (v->valuedouble < lo || v->valuedouble > hi)
        return pl_fail(c, sub, "%g is out of range, expected %g to %g", v->valuedouble, lo, hi);
    *out = v->valuedouble;
    return 0;
}

static int pl_whole(const struct pl *c, const cJSON *v, const char *jp, double lo, double hi, double *out)
{
    if (!cJSON_IsNumber(v) || v->valuedouble != floor(v->valuedouble))
        return pl_fail(c, jp, "expected a whole number");
    if (v->valuedouble < lo || v->valuedouble > hi)
        return pl_fail(c, jp, "%.0f is out of range, expected %.0f to %.0f", v->valuedouble, lo, hi);
    *out = v->valuedouble;
    return 0;
}

/* Optional string; required when need is set.  *out borrows from the tree. */
static int pl_str(const struct pl *c, const cJSON *obj, const char *jp, const char *key,
                  int need, const char **out)
{
    const cJSON *v = pl_get(obj, key);
    char sub[JP];
    pl_join(sub, jp, key);
    if (!v) return need ? pl_fail(c, sub, "missing, expected a string") : 0;
    if (!cJSON_IsString(v) || !v->valuestring[0]) return pl_fail(c, sub, "expected a non-empty string");
    *out = v->valuestring;
    return 0;
}

/* Index of s in the NULL-terminated table names, or a failure naming them. */
static int pl_pick(const struct pl *c, const char *jp, const char *s, const char *const *names, int *out)
{
    char list[256] = "";
    for (int k = 0; names[k]; k++) {
        if (!strcmp(names[k], s)) { *out = k; return 0; }
        snprintf(list + strlen(list), sizeof list - strlen(list), "%s%s", k ? ", " : "", names[k]);
    }
    return pl_fail(c, jp, "'%s' is not known, expected one of %s", s, list);
}

/* A name usable inside a cell id: letters, digits, '.', '_', '-'. */
static int pl_plain(const char *s)
{
    for (; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
              *s == '.' || *s == '_' || *s == '-'))
            return 0;
    return 1;
}

void plan_hash_hex(const void *data, size_t len, char out[17])
{
    /* FNV-1a, 64-bit offset basis and prime (Fowler, Noll, Vo; common practice). */
    uint64_t h = 14695981039346656037ULL;
    const unsigned char *b = data;
    for (size_t k = 0; k < len; k++) {
        h ^= b[k];
        h *= 1099511628211ULL;
    }
    snprintf(out, 17, "%016llx", (unsigned long long)h);
}

void plan_format_number(char *out, size_t n, double v)
{
    char b[NUMFMT_LEN];
    snprintf(out, n, "%s", numfmt(b, v));
}

const char *plan_cmp_name(enum plan_cmp c)
{
    static const char *const names[] = {">=", ">", "<=", "<"};
    return names[c];
}

const char *plan_target_name(enum plan_target t)
{
    static const char *const names[] = {"mean", "lo", "hi", "diff", "diff_lo", "diff_hi"};
    return names[t];
}


/* ---- recordings and protocol ------------------------------------------- */

/* Resolve a recording path against the scenario file's folder. */
static char *pl_resolve(const char *file, const char *rel)
{
    char dir[4096], out[8192];
    fileio_dirname(dir, sizeof dir, file);
    if (rel[0] == '/' || !strcmp(dir, ".")) snprintf(out, sizeof out, "%s", rel);
    else snprintf(out, sizeof out, "%s/%s", dir, rel);
    return pl_dup(out);
}

static int pl_recordings(const struct pl *c, const cJSON *root, struct plan *p)
{
    static const char *const keys[] = {"map", "query", NULL};
    const cJSON *r = pl_get(root, "recordings");
    if (!r) return pl_fail(c, "recordings", "missing, expected {\"map\": PATH}");
    if (pl_keys(c, r, "recordings", keys)) return -1;
    const char *map = NULL, *query = NULL;
    if (pl_str(c, r, "recordings", "map", 1, &map) || pl_str(c, r, "recordings", "query", 0, &query))
        return -1;
    p->map_rec = pl_resolve(c->file, map);
    if (query) p->query_rec = pl_resolve(c->file, query);
    if (!p->map_rec || (query && !p->query_rec)) return pl_fail(c, "recordings", "out of memory");
    return 0;
}

static int pl_protocol(const struct pl *c, const cJSON *root, struct plan *p)
{
    static const char *const keys[] = {"mode", "radius_m", "radius_neg_m", "exclude_s",
                                       "exclude_scans", "planar", "counting", "top_k", NULL};
    struct protocol *q = &p->protocol;
    protocol_defaults(q);
    q->mode = p->query_rec ? PROTOCOL_RELOC : PROTOCOL_LOOP;
    const cJSON *o = pl_get(root, "protocol");
    if (!o) return 0;
    if (pl_keys(c, o, "protocol", keys)) return -1;
    const char *s = NULL;
    int k;
    if (pl_str(c, o, "protocol", "mode", 0, &s)) return -1;
    if (s && pl_pick(c, "protocol.mode", s, protocol_mode_names, &k)) return -1;
    if (s) q->mode = (enum protocol_mode)k;
    s = NULL;
    if (pl_str(c, o, "protocol", "counting", 0, &s)) return -1;
    if (s && pl_pick(c, "protocol.counting", s, protocol_counting_names, &k)) return -1;
    if (s) q->counting = (enum protocol_counting)k;
    double neg = NAN, scans = -1, topk = q->top_k;
    if (pl_num(c, o, "protocol", "radius_m", 1e-9, 1e6, &q->r_pos_m) ||
        pl_num(c, o, "protocol", "radius_neg_m", 1e-9, 1e6, &neg) ||
        pl_num(c, o, "protocol", "exclude_s", 0, 1e9, &q->exclusion_s))
        return -1;
    const cJSON *v;
    if ((v = pl_get(o, "exclude_scans")) && pl_whole(c, v, "protocol.exclude_scans", 0, 1e9, &scans)) return -1;
    if ((v = pl_get(o, "top_k")) && pl_whole(c, v, "protocol.top_k", 1, 100000, &topk)) return -1;
    if ((v = pl_get(o, "planar"))) {
        if (!cJSON_IsBool(v)) return pl_fail(c, "protocol.planar", "expected true or false");
        q->planar = cJSON_IsTrue(v);
    }
    q->r_neg_m = isnan(neg) ? q->r_pos_m : neg;
    q->exclusion_scans = (long)scans;
    q->top_k = (int)topk;
    if (p->query_rec && q->mode == PROTOCOL_LOOP)
        return pl_fail(c, "protocol.mode", "'loop' uses one recording, expected 'reloc' with recordings.query");
    if (!p->query_rec && q->mode == PROTOCOL_RELOC)
        return pl_fail(c, "protocol.mode", "'reloc' needs recordings.query, expected a query recording");
    char msg[256];
    if (protocol_check(q, msg, sizeof msg)) return pl_fail(c, "protocol", "%s", msg);
    return 0;
}

static int pl_bootstrap(const struct pl *c, const cJSON *root, struct plan *p)
{
    static const char *const keys[] = {"resamples", "seed", NULL};
    p->bootstrap = 1000;
    p->bootstrap_seed = 1;
    const cJSON *o = pl_get(root, "bootstrap");
    if (!o) return 0;
    if (pl_keys(c, o, "bootstrap", keys)) return -1;
    double r = p->bootstrap, s = (double)p->bootstrap_seed;
    const cJSON *v;
    if ((v = pl_get(o, "resamples")) && pl_whole(c, v, "bootstrap.resamples", 0, 1e6, &r)) return -1;
    if ((v = pl_get(o, "seed")) && pl_whole(c, v, "bootstrap.seed", 0, 9007199254740992.0, &s)) return -1;
    p->bootstrap = (int)r;
    p->bootstrap_seed = (uint64_t)s;
    return 0;
}

/* "seeds": a count N (seeds 1..N) or a list of whole numbers. */
static int pl_seeds(const struct pl *c, const cJSON *v, const char *jp, uint64_t **out, size_t *n)
{
    double x;
    if (cJSON_IsNumber(v)) {
        if (pl_whole(c, v, jp, 1, 10000, &x)) return -1;
        *n = (size_t)x;
        if (!(*out = malloc(*n * sizeof **out))) return pl_fail(c, jp, "out of memory");
        for (size_t k = 0; k < *n; k++) (*out)[k] = k + 1;
        return 0;
    }
    if (!cJSON_IsArray(v) || !cJSON_GetArraySize(v))
        return pl_fail(c, jp, "expected a count or a non-empty list of seeds");
    *n = (size_t)cJSON_GetArraySize(v);
    if (!(*out = malloc(*n * sizeof **out))) return pl_fail(c, jp, "out of memory");
    struct keyset seen = {0};
    size_t k = 0;
    int rc = 0;
    for (const cJSON *it = v->child; it && !rc; it = it->next, k++) {
        char sub[JP];
        pl_index(sub, jp, k);
        if (pl_whole(c, it, sub, 0, 9007199254740992.0, &x)) { rc = -1; break; }
        (*out)[k] = (uint64_t)x;
        int r = keyset_add(&seen, &(*out)[k], sizeof **out, k, NULL);
        if (r) rc = r < 0 ? pl_fail(c, sub, "out of memory") : pl_fail(c, sub, "seed %.0f given twice", x);
    }
    keyset_free(&seen);
    return rc;
}

/* ---- methods ------------------------------------------------------------ */

/* Append one setting "key=value" of a variant object to buf. */
static int pl_setting(const struct pl *c, const cJSON *it, const char *jp, char *buf, size_t n)
{
    char val[256];
    if (cJSON_IsNumber(it)) plan_format_number(val, sizeof val, it->valuedouble);
    else if (cJSON_IsBool(it)) snprintf(val, sizeof val, "%s", cJSON_IsTrue(it) ? "true" : "false");
    else if (cJSON_IsString(it) && it->valuestring[0] && !strpbrk(it->valuestring, ",:=+ "))
        snprintf(val, sizeof val, "%s", it->valuestring);
    else return pl_fail(c, jp, "expected a number, true/false or a word without ',:=+' or spaces");
    size_t used = strlen(buf);
    if (snprintf(buf + used, n - used, "%s%s=%s", strchr(buf, ':') ? "," : ":", it->string, val) >= (int)(n - used))
        return pl_fail(c, jp, "settings too long");
    return 0;
}

/* Append a method; alias (NULL: none) must be a plain word, and no two
 * methods may share a label or a name (an alias equal to another method's
 * label would name two methods too).  jp names the entry, ajp its alias. */
static int pl_add_method(const struct pl *c, struct plan *p, const char *label, const char *alias,
                         const char *jp, const char *ajp)
{
    if (alias && !pl_plain(alias))
        return pl_fail(c, ajp, "'%s' is not a plain word, expected letters, digits, '.', '_', '-'", alias);
    const char *mine = alias ? alias : label;
    /* c->methods holds the labels so far, c->method_names their names */
    if (keyset_find(c->methods, label, strlen(label), NULL)) return pl_fail(c, jp, "method '%s' given twice", label);
    int label_named = keyset_find(c->method_names, label, strlen(label), NULL);
    if (label_named || keyset_find(c->method_names, mine, strlen(mine), NULL) ||
        keyset_find(c->methods, mine, strlen(mine), NULL))
        return pl_fail(c, alias ? ajp : jp, "two methods are called '%s', expected a name of its own for each",
                       label_named ? label : mine);
    if (grow_reserve(&p->methods, &p->cap_methods, p->n_methods + 1, sizeof *p->methods))
        return pl_fail(c, jp, "out of memory");
    struct plan_method *m = p->methods + p->n_methods;
    memset(m, 0, sizeof *m);
    p->n_methods++;
    m->label = pl_dup(label);
    m->name = pl_dup(alias ? alias : label);
    m->has_alias = alias != NULL;
    if (!m->label || !m->name || keyset_add(c->methods, m->label, strlen(m->label), p->n_methods - 1, NULL) ||
        keyset_add(c->method_names, m->name, strlen(m->name), p->n_methods - 1, NULL))
        return pl_fail(c, jp, "out of memory");
    return 0;
}

/* One variant object: settings "key": value, and an optional "alias". */
static int pl_variant(const struct pl *c, const cJSON *v, const char *el, const char *name, struct plan *p)
{
    char label[1024], ajp[JP];
    const char *alias = NULL;
    if (!cJSON_IsObject(v)) return pl_fail(c, el, "expected an object of settings");
    snprintf(label, sizeof label, "%s", name);
    for (const cJSON *it = v->child; it; it = it->next) {
        char kp[JP];
        pl_join(kp, el, it->string);
        if (!strcmp(it->string, "alias")) {
            if (pl_str(c, v, el, "alias", 1, &alias)) return -1;
            continue;
        }
        if (!it->string[0] || !pl_plain(it->string)) return pl_fail(c, kp, "expected a plain setting name");
        if (pl_setting(c, it, kp, label, sizeof label)) return -1;
    }
    pl_join(ajp, el, "alias");
    return pl_add_method(c, p, label, alias, el, ajp);
}

static int pl_method(const struct pl *c, const cJSON *o, const char *jp, struct plan *p)
{
    static const char *const keys[] = {"name", "alias", "variants", NULL};
    const char *name = NULL, *alias = NULL;
    if (pl_keys(c, o, jp, keys) || pl_str(c, o, jp, "name", 1, &name) || pl_str(c, o, jp, "alias", 0, &alias))
        return -1;
    char sub[JP], el[JP], ajp[JP];
    pl_join(ajp, jp, "alias");
    if (strpbrk(name, ":,=+ ")) {
        pl_join(sub, jp, "name");
        return pl_fail(c, sub, "'%s' holds settings, expected them under \"variants\"", name);
    }
    const cJSON *vs = pl_get(o, "variants");
    if (!vs) {
        pl_join(sub, jp, "name");
        return pl_add_method(c, p, name, alias, sub, ajp);
    }
    if (alias) return pl_fail(c, ajp, "a method with variants, expected an \"alias\" in each variant instead");
    pl_join(sub, jp, "variants");
    if (!cJSON_IsArray(vs) || !cJSON_GetArraySize(vs))
        return pl_fail(c, sub, "expected a non-empty list of setting objects");
    size_t k = 0;
    for (const cJSON *v = vs->child; v; v = v->next, k++) {
        pl_index(el, sub, k);
        if (pl_variant(c, v, el, name, p)) return -1;
    }
    return 0;
}

static int pl_methods(const struct pl *c, const cJSON *root, struct plan *p)
{
    const cJSON *a = pl_get(root, "methods");
    if (!a || !cJSON_IsArray(a) || !cJSON_GetArraySize(a))
        return pl_fail(c, "methods", "expected a non-empty list of methods");
    size_t k = 0;
    for (const cJSON *o = a->child; o; o = o->next, k++) {
        char jp[JP];
        pl_index(jp, "methods", k);
        if (pl_method(c, o, jp, p)) return -1;
    }
    return 0;
}

/* ---- conditions --------------------------------------------------------- */

static int pl_axis(const struct pl *c, const cJSON *o, const char *jp, struct plan_cond *d)
{
    static const char *const keys[] = {"stage", "key", "values", NULL};
    const char *stage = NULL, *key = NULL;
    if (pl_keys(c, o, jp, keys) || pl_str(c, o, jp, "stage", 1, &stage) || pl_str(c, o, jp, "key", 1, &key))
        return -1;
    char sub[JP], el[JP];
    if (!pl_plain(stage) || !pl_plain(key)) {
        pl_join(sub, jp, pl_plain(stage) ? "key" : "stage");
        return pl_fail(c, sub, "expected a plain name (letters, digits, '.', '_', '-')");
    }
    pl_join(sub, jp, "values");
    const cJSON *vs = pl_get(o, "values");
    if (!vs || !cJSON_IsArray(vs) || !cJSON_GetArraySize(vs))
        return pl_fail(c, sub, "expected a non-empty list of numbers");
    d->n_values = (size_t)cJSON_GetArraySize(vs);
    d->values = malloc(d->n_values * sizeof *d->values);
    d->axis_stage = pl_dup(stage);
    d->axis_key = pl_dup(key);
    if (!d->values || !d->axis_stage || !d->axis_key) return pl_fail(c, jp, "out of memory");
    static const double zero = 0.0;   /* the key of -0 and 0, which are one value */
    struct keyset seen = {0};
    size_t k = 0;
    int rc = 0;
    for (const cJSON *v = vs->child; v && !rc; v = v->next, k++) {
        pl_index(el, sub, k);
        if (!cJSON_IsNumber(v) || !isfinite(v->valuedouble)) { rc = pl_fail(c, el, "expected a number"); break; }
        d->values[k] = v->valuedouble;
        int r = keyset_add(&seen, d->values[k] == 0 ? &zero : &d->values[k], sizeof zero, k, NULL);
        if (r) rc = r < 0 ? pl_fail(c, el, "out of memory") : pl_fail(c, el, "value %g given twice", v->valuedouble);
    }
    keyset_free(&seen);
    return rc;
}

static int pl_cond(const struct pl *c, const cJSON *o, const char *jp, struct plan *p, struct plan_cond *d,
                   const uint64_t *seeds, size_t n_seeds)
{
    static const char *const keys[] = {"name", "chain", "on", "axis", "seeds", "stages_alone", NULL};
    const char *name = NULL, *chain = NULL, *on = NULL;
    char sub[JP];
    int k;
    if (pl_keys(c, o, jp, keys) || pl_str(c, o, jp, "name", 1, &name) ||
        pl_str(c, o, jp, "chain", 0, &chain) || pl_str(c, o, jp, "on", 0, &on))
        return -1;
    pl_join(sub, jp, "name");
    if (!pl_plain(name)) return pl_fail(c, sub, "'%s' expected a plain name (letters, digits, '.', '_', '-')", name);
    if (keyset_find(c->conds, name, strlen(name), NULL)) return pl_fail(c, sub, "condition '%s' given twice", name);
    pl_join(sub, jp, "on");
    if (on && pl_pick(c, sub, on, side_names, &k)) return -1;
    d->name = pl_dup(name);
    d->chain = pl_dup(chain);
    d->on = pl_dup(on);
    if (!d->name || (chain && !d->chain) || (on && !d->on) ||
        keyset_add(c->conds, d->name, strlen(d->name), (size_t)(d - p->conds), NULL))
        return pl_fail(c, jp, "out of memory");
    pl_join(sub, jp, "chain");
    struct err ce;
    if (chain && chain_parse(chain, &d->parsed, &ce)) return pl_fail(c, sub, "%s", ce.msg);
    const cJSON *ax = pl_get(o, "axis"), *alone = pl_get(o, "stages_alone");
    pl_join(sub, jp, "axis");
    if (ax && pl_axis(c, ax, sub, d)) return -1;
    pl_join(sub, jp, "stages_alone");
    if (alone && !cJSON_IsBool(alone)) return pl_fail(c, sub, "expected true or false");
    d->stages_alone = cJSON_IsTrue(alone);
    if (d->stages_alone && (ax || !chain || !strchr(chain, '+')))
        return pl_fail(c, sub, "expected a chain of two or more stages and no axis");
    const cJSON *sv = pl_get(o, "seeds");
    pl_join(sub, jp, "seeds");
    if (sv) return pl_seeds(c, sv, sub, &d->seeds, &d->n_seeds);
    /* Nothing random to draw: one seed is enough. */
    d->n_seeds = (chain || ax) ? n_seeds : 1;
    if (!(d->seeds = malloc(d->n_seeds * sizeof *d->seeds))) return pl_fail(c, jp, "out of memory");
    memcpy(d->seeds, seeds, d->n_seeds * sizeof *seeds);
    return 0;
}

/* Append one condition per stage of compound condition k, that stage alone:
 * "mount" with "sector:width=60+tilt:pitch=2" adds "mount-only-sector" and
 * "mount-only-tilt" (same side and seeds), so the stage that dominates the
 * compound loss can be named. */
static int pl_stages_alone(const struct pl *c, struct plan *p, size_t k)
{
    size_t n = 1;
    for (const char *q = p->conds[k].chain; *q; q++) n += *q == '+';
    if (grow_reserve(&p->conds, &p->cap_conds, p->n_conds + n, sizeof *p->conds))
        return pl_fail(c, "conditions", "out of memory");
    const char *at = p->conds[k].chain;
    for (size_t j = 0; j < n; j++) {
        const struct plan_cond *d = &p->conds[k];
        size_t len = strcspn(at, "+"), stage = strcspn(at, ":+");
        struct plan_cond *x = &p->conds[p->n_conds];
        memset(x, 0, sizeof *x);
        p->n_conds++;
        char name[PLAN_ID_MAX];
        if ((size_t)snprintf(name, sizeof name, "%s-only-%.*s", d->name, (int)stage, at) >= sizeof name)
            return pl_fail(c, "conditions", "condition name '%s' too long for its stages", d->name);
        x->name = pl_dup(name);
        x->chain = malloc(len + 1);
        if (x->chain) snprintf(x->chain, len + 1, "%.*s", (int)len, at);
        x->on = d->on ? pl_dup(d->on) : NULL;
        x->seeds = malloc((d->n_seeds ? d->n_seeds : 1) * sizeof *x->seeds);
        if (!x->name || !x->chain || (d->on && !x->on) || !x->seeds) return pl_fail(c, "conditions", "out of memory");
        memcpy(x->seeds, d->seeds, d->n_seeds * sizeof *x->seeds);
        x->n_seeds = d->n_seeds;
        x->is_part = 1;
        x->part_of = k;
        struct err ce;
        if (chain_parse(x->chain, &x->parsed, &ce)) return pl_fail(c, "conditions", "%s: %s", name, ce.msg);
        int r = keyset_add(c->conds, x->name, strlen(x->name), p->n_conds - 1, NULL);
        if (r < 0) return pl_fail(c, "conditions", "out of memory");
        if (r) return pl_fail(c, "conditions", "condition '%s' is also the name of a stage run alone", name);
        at += len + (at[len] == '+');
    }
    return 0;
}

static int pl_conditions(const struct pl *c, const cJSON *root, struct plan *p)
{
    uint64_t one = 1, *seeds = &one;
    size_t n_seeds = 1;
    const cJSON *sv = pl_get(root, "seeds");
    if (sv && pl_seeds(c, sv, "seeds", &seeds, &n_seeds)) {
        if (seeds != &one) free(seeds);
        return -1;
    }
    int rc = 0;
    const cJSON *a = pl_get(root, "conditions");
    if (!a || !cJSON_IsArray(a) || !cJSON_GetArraySize(a))
        rc = pl_fail(c, "conditions", "expected a non-empty list of conditions");
    size_t n = rc ? 0 : (size_t)cJSON_GetArraySize(a);
    if (!rc && !(p->conds = calloc(n, sizeof *p->conds))) rc = pl_fail(c, "conditions", "out of memory");
    if (!rc) p->cap_conds = n;
    const cJSON *o = rc ? NULL : a->child;
    for (size_t k = 0; o && !rc; o = o->next, k++) {
        char jp[JP];
        pl_index(jp, "conditions", k);
        rc = pl_cond(c, o, jp, p, &p->conds[k], seeds, n_seeds);
        p->n_conds = k + 1;
    }
    for (size_t k = 0, n0 = p->n_conds; !rc && k < n0; k++)
        if (p->conds[k].stages_alone) rc = pl_stages_alone(c, p, k);
    if (seeds != &one) free(seeds);
    return rc;
}

/* ---- criteria ----------------------------------------------------------- */

/* "f1max, r100p, ..., recall_at_1pct": the keys of the metric table. */
static void pl_metric_keys(char *out, size_t n)
{
    size_t at = 0;
    out[0] = 0;
    for (int m = 0; m < PR_N_METRICS && at < n; m++) {
        int k = snprintf(out + at, n - at, "%s%s", m ? (m + 1 < PR_N_METRICS ? ", " : " or ") : "",
                         pr_metric_name((enum pr_metric)m));
        if (k < 0) break;
        at += (size_t)k;
    }
}

/* Condition by name, and the axis value when the condition has an axis. */
static int pl_select_cond(const struct pl *c, const cJSON *o, const char *jp, const struct plan *p,
                          const char *ckey, const char *vkey, size_t *cond, int *has, double *value)
{
    const char *name = NULL;
    char sub[JP];
    if (pl_str(c, o, jp, ckey, 1, &name)) return -1;
    pl_join(sub, jp, ckey);
    size_t k;
    if (!keyset_find(c->conds, name, strlen(name), &k)) return pl_fail(c, sub, "no condition named '%s'", name);
    *cond = k;
    const struct plan_cond *d = &p->conds[k];
    const cJSON *v = pl_get(o, vkey);
    pl_join(sub, jp, vkey);
    *has = v != NULL;
    if (!d->n_values && v) return pl_fail(c, sub, "condition '%s' has no axis, expected no value", name);
    if (d->n_values && !v)
        return pl_fail(c, sub, "missing, condition '%s' sweeps %s.%s, expected one of its values",
                       name, d->axis_stage, d->axis_key);
    if (!v) return 0;
    if (!cJSON_IsNumber(v)) return pl_fail(c, sub, "expected a number");
    for (size_t j = 0; j < d->n_values; j++)
        if (d->values[j] == v->valuedouble) { *value = v->valuedouble; return 0; }
    return pl_fail(c, sub, "%g is not among the values of condition '%s'", v->valuedouble, name);
}

static int pl_select_method(const struct pl *c, const cJSON *o, const char *jp, const struct plan *p, long *out)
{
    const char *m = NULL;
    char sub[JP];
    *out = -1;
    if (pl_str(c, o, jp, "method", 0, &m)) return -1;
    if (!m) return 0;
    pl_join(sub, jp, "method");
    long found = -1, hits = 0;
    size_t len = strlen(m);
    for (size_t k = 0; k < p->n_methods; k++)
        if (!strcmp(p->methods[k].name, m) || !strcmp(p->methods[k].label, m)) { *out = (long)k; return 0; }
    for (size_t k = 0; k < p->n_methods; k++) {
        const char *l = p->methods[k].label;
        if (!strncmp(l, m, len) && l[len] == ':') { found = (long)k; hits++; }
    }
    if (hits == 1) { *out = found; return 0; }
    if (hits > 1) return pl_fail(c, sub, "'%s' names %ld variants, expected one full label", m, hits);
    char names[512] = "";
    for (size_t k = 0; k < p->n_methods; k++)
        snprintf(names + strlen(names), sizeof names - strlen(names), "%s%s", k ? ", " : "", p->methods[k].name);
    return pl_fail(c, sub, "no method '%s' in methods, expected one of %s", m, names);
}

static int pl_op_metric(const char *m)
{
    for (int k = 0; k < OPP_N; k++)
        if (!strcmp(oppoint_score_name((enum oppoint_score_id)k), m)) return 1;
    return 0;
}

/* "tuned_on": a condition without an axis; "operating_point": how the
 * threshold is chosen there (default f1max). */
static int pl_tuned(const struct pl *c, const cJSON *o, const char *jp, const struct plan *p,
                    struct plan_criterion *r)
{
    const char *rule = NULL;
    char sub[JP];
    size_t k;
    r->tuned_on = -1;
    if (pl_str(c, o, jp, "operating_point", 0, &rule)) return -1;
    if (!pl_get(o, "tuned_on")) {
        pl_join(sub, jp, "operating_point");
        return rule ? pl_fail(c, sub, "needs tuned_on, the condition whose cells choose the threshold") : 0;
    }
    if (pl_select_cond(c, o, jp, p, "tuned_on", "tuned_on_value", &k, &r->has_tuned_value, &r->tuned_value))
        return -1;
    r->tuned_on = (long)k;
    r->op = (struct oppoint_choice){OPPOINT_F1MAX, 0};
    pl_join(sub, jp, "operating_point");
    struct err e;
    if (rule && oppoint_parse(rule, &r->op, &e)) return pl_fail(c, sub, "%s", e.msg);
    return 0;
}

/* "operating_point": {"tuned_on": COND, "tuned_on_value": V, "rule": RULE}
 * for the whole scenario (the PR_OP_* metrics of every cell). */
static int pl_op(const struct pl *c, const cJSON *root, struct plan *p)
{
    static const char *const keys[] = {"tuned_on", "tuned_on_value", "rule", NULL};
    const cJSON *o = pl_get(root, "operating_point");
    const char *rule = NULL;
    size_t k;
    if (!o) return 0;
    if (pl_keys(c, o, "operating_point", keys) || pl_str(c, o, "operating_point", "rule", 0, &rule) ||
        pl_select_cond(c, o, "operating_point", p, "tuned_on", "tuned_on_value", &k, &p->op.has_value,
                       &p->op.value))
        return -1;
    p->op.on = 1;
    p->op.tuned_on = k;
    p->op.rule = (struct oppoint_choice){OPPOINT_F1MAX, 0};
    struct err e;
    if (rule && oppoint_parse(rule, &p->op.rule, &e)) return pl_fail(c, "operating_point.rule", "%s", e.msg);
    return 0;
}

static int pl_criterion(const struct pl *c, const cJSON *o, const char *jp, const struct plan *p,
                        struct plan_criterion *r)
{
    static const char *const keys[] = {"text", "metric", "method", "condition", "value", "baseline",
                                       "baseline_value", "target", "comparator", "threshold",
                                       "tuned_on", "tuned_on_value", "operating_point", NULL};
    static const char *const targets[] = {"mean", "lo", "hi", "diff", "diff_lo", "diff_hi", NULL};
    static const char *const cmps[] = {">=", ">", "<=", "<", NULL};
    const char *text = NULL, *metric = NULL, *target = "mean", *cmp = NULL;
    char sub[JP];
    int k;
    if (pl_keys(c, o, jp, keys) || pl_str(c, o, jp, "text", 0, &text) ||
        pl_str(c, o, jp, "metric", 1, &metric) || pl_str(c, o, jp, "target", 0, &target) ||
        pl_str(c, o, jp, "comparator", 1, &cmp))
        return -1;
    if (pl_tuned(c, o, jp, p, r)) return -1;
    pl_join(sub, jp, "metric");
    if (r->tuned_on >= 0 && !pl_op_metric(metric))
        return pl_fail(c, sub, "'%s' is not a score at an operating point, expected precision, recall, f1, "
                       "false_positives, false_positives_per_km or false_positives_per_hour", metric);
    if (r->tuned_on < 0 && pr_metric_find(metric) < 0) {
        char keys[512];
        pl_metric_keys(keys, sizeof keys);
        return pl_fail(c, sub, "'%s' is not known, expected %s", metric, keys);
    }
    if (r->tuned_on < 0 && !p->op.on && pr_metric_def((enum pr_metric)pr_metric_find(metric))->at_op)
        return pl_fail(c, sub, "'%s' is a score at the operating point, expected the scenario's "
                       "\"operating_point\" (or tuned_on in this criterion)", metric);
    if (!(r->metric = pl_dup(metric))) return pl_fail(c, jp, "out of memory");
    pl_join(sub, jp, "target");
    if (pl_pick(c, sub, target, targets, &k)) return -1;
    r->target = (enum plan_target)k;
    pl_join(sub, jp, "comparator");
    if (pl_pick(c, sub, cmp, cmps, &k)) return -1;
    r->cmp = (enum plan_cmp)k;
    pl_join(sub, jp, "threshold");
    if (!pl_get(o, "threshold")) return pl_fail(c, sub, "missing, expected a number");
    if (pl_num(c, o, jp, "threshold", -1e300, 1e300, &r->threshold)) return -1;
    if (pl_select_method(c, o, jp, p, &r->method) ||
        pl_select_cond(c, o, jp, p, "condition", "value", &r->cond, &r->has_value, &r->value))
        return -1;
    r->baseline = -1;
    int diff = r->target >= PLAN_DIFF;
    pl_join(sub, jp, "baseline");
    if ((!diff || r->tuned_on >= 0) && pl_get(o, "baseline"))
        return pl_fail(c, sub, r->tuned_on >= 0 ? "not used with tuned_on: a difference is taken against "
                       "the tuned_on condition at its threshold" : "only used with target diff, diff_lo or diff_hi");
    if (diff && r->tuned_on < 0) {
        size_t b;
        if (pl_select_cond(c, o, jp, p, "baseline", "baseline_value", &b, &r->has_base_value, &r->base_value))
            return -1;
        r->baseline = (long)b;
    }
    if (!(r->text = pl_dup(text))) {
        char t[512];
        char at[200] = "";
        if (r->tuned_on >= 0)
            snprintf(at, sizeof at, " at the threshold tuned on %s (%s)", p->conds[r->tuned_on].name,
                     oppoint_rule_name(r->op.rule));
        snprintf(t, sizeof t, "%s %s of %s on %s%s %s %g", plan_target_name(r->target), metric,
                 r->method < 0 ? "every method" : p->methods[r->method].name, p->conds[r->cond].name, at,
                 plan_cmp_name(r->cmp), r->threshold);
        if (!(r->text = pl_dup(t))) return pl_fail(c, jp, "out of memory");
    }
    return 0;
}

static int pl_criteria(const struct pl *c, const cJSON *root, struct plan *p)
{
    const cJSON *a = pl_get(root, "criteria");
    if (!a) return 0;
    if (!cJSON_IsArray(a)) return pl_fail(c, "criteria", "expected a list of criteria");
    size_t n = (size_t)cJSON_GetArraySize(a);
    if (n && !(p->criteria = calloc(n, sizeof *p->criteria))) return pl_fail(c, "criteria", "out of memory");
    size_t k = 0;
    for (const cJSON *o = a->child; o; o = o->next, k++) {
        char jp[JP];
        pl_index(jp, "criteria", k);
        p->n_criteria = k + 1;
        if (pl_criterion(c, o, jp, p, &p->criteria[k])) return -1;
    }
    return 0;
}

/* ---- grid expansion ----------------------------------------------------- */

/* The normalised text of ch (perturb/chain.h chain_format), malloc'ed at
 * the length it needs; NULL when out of memory. */
static char *pl_chain_text(const struct chain *ch)
{
    char one[1];
    size_t n = chain_format(ch, one, sizeof one);
    char *t = malloc(n + 1);
    if (t && chain_format(ch, t, n + 1) != n) { free(t); t = NULL; }
    return t;
}

/* The chain of an axis cell: the condition's parsed chain with the axis
 * parameter set to value (never a rewrite of the text the user wrote). */
static int pl_axis_chain(const struct pl *c, const struct plan_cond *d, size_t ci, size_t vi, char **out)
{
    struct chain *ch = NULL;
    struct err ce;
    char jp[JP];
    snprintf(jp, sizeof jp, "conditions[%zu].axis.values[%zu]", ci, vi);
    if (chain_with_value(d->parsed, d->axis_stage, d->axis_key, d->values[vi], &ch, &ce))
        return pl_fail(c, jp, "%s", ce.msg);
    *out = pl_chain_text(ch);
    chain_free(ch);
    return *out ? 0 : pl_fail(c, jp, "out of memory");
}

/* Method label as id text: "scan-context:rings=20,sectors=60" -> "scan-context_rings-20_sectors-60". */
static void pl_id_part(char *out, size_t n, const char *label)
{
    const char *slash = strrchr(label, '/');
    const char *colon = strchr(label, ':');
    if (slash && (!colon || slash < colon)) label = slash + 1;
    size_t j = 0;
    for (const char *s = label; *s && j + 1 < n; s++) {
        char ch = *s;
        if (ch == ':' || ch == ',') ch = '_';
        else if (!pl_plain((char[]){ch, 0})) ch = '-';
        out[j++] = ch;
    }
    out[j] = 0;
}

static int pl_cell(const struct pl *c, struct plan *p, size_t m, size_t ci, long vi, uint64_t seed,
                   struct plan_cell *cell)
{
    const struct plan_cond *d = &p->conds[ci];
    char mid[96], val[64] = "";
    pl_id_part(mid, sizeof mid, p->methods[m].name);
    /* cells/.NAME is where a cell is made (.part-ID) and what listings skip */
    if (mid[0] == '.')
        return pl_fail(c, "methods", "method '%s' gives cell ids that start with '.', which name hidden folders, "
                       "expected a name that does not start with '.'", p->methods[m].name);
    cell->method = m;
    cell->cond = ci;
    cell->seed = seed;
    cell->has_axis = vi >= 0;
    if (vi >= 0) {
        char num[48];
        cell->axis_value = d->values[vi];
        plan_format_number(num, sizeof num, d->values[vi]);
        snprintf(val, sizeof val, "_%s-%s", d->axis_key, num);
        if (pl_axis_chain(c, d, ci, (size_t)vi, &cell->chain)) return -1;
    } else if (d->chain && !(cell->chain = pl_dup(d->chain))) {
        return pl_fail(c, "conditions", "out of memory");
    }
    /* a cut id could name two cells alike: refuse instead */
    if (err_cut(snprintf(cell->id, sizeof cell->id, "%s__%s%s__s%llu", mid, d->name, val, (unsigned long long)seed),
                sizeof cell->id))
        return pl_fail(c, "conditions", "a cell id (method, condition, axis value, seed) is longer than the "
                       "limit, expected shorter method or condition names");
    return 0;
}

static int pl_expand(const struct pl *c, struct plan *p)
{
    size_t n = 0;
    for (size_t ci = 0; ci < p->n_conds; ci++)
        n += (p->conds[ci].n_values ? p->conds[ci].n_values : 1) * p->conds[ci].n_seeds;
    n *= p->n_methods;
    if (!(p->cells = calloc(n ? n : 1, sizeof *p->cells))) return pl_fail(c, "", "out of memory");
    for (size_t m = 0; m < p->n_methods; m++)
        for (size_t ci = 0; ci < p->n_conds; ci++) {
            const struct plan_cond *d = &p->conds[ci];
            size_t nv = d->n_values ? d->n_values : 1;
            for (size_t v = 0; v < nv; v++)
                for (size_t s = 0; s < d->n_seeds; s++)
                    if (pl_cell(c, p, m, ci, d->n_values ? (long)v : -1, d->seeds[s], &p->cells[p->n_cells++]))
                        return -1;
        }
    for (size_t k = 0; k < p->n_cells; k++) {
        int r = keyset_add(&p->ids, p->cells[k].id, strlen(p->cells[k].id), k, NULL);
        if (r < 0) return pl_fail(c, "", "out of memory");
        if (r) return pl_fail(c, "methods", "two cells share the id '%s', expected distinct method labels",
                              p->cells[k].id);
    }
    return 0;
}

/* ---- load, free, shards ------------------------------------------------- */

static int pl_root(const struct pl *c, const cJSON *root, struct plan *p)
{
    static const char *const keys[] = {"format", "name", "description", "recordings", "protocol",
                                       "methods", "conditions", "seeds", "bootstrap", "criteria",
                                       "operating_point", NULL};
    const char *fmt = NULL, *name = NULL, *desc = NULL;
    if (pl_keys(c, root, "", keys) || pl_str(c, root, "", "format", 1, &fmt)) return -1;
    if (strcmp(fmt, PLAN_FORMAT)) return pl_fail(c, "format", "'%s' is not known, expected '%s'", fmt, PLAN_FORMAT);
    if (pl_str(c, root, "", "name", 0, &name) || pl_str(c, root, "", "description", 0, &desc)) return -1;
    if (name && !(p->name = pl_dup(name))) return pl_fail(c, "name", "out of memory");
    return pl_recordings(c, root, p) || pl_protocol(c, root, p) || pl_bootstrap(c, root, p) ||
           pl_methods(c, root, p) || pl_conditions(c, root, p) || pl_op(c, root, p) || pl_criteria(c, root, p) ||
           pl_expand(c, p) ? -1 : 0;
}

int plan_parse(struct plan *p, const char *text, size_t len, const char *path, struct err *e)
{
    memset(p, 0, sizeof *p);
    struct keyset methods = {0}, names = {0}, conds = {0};
    struct pl c = {path, e, text, len, &methods, &names, &conds};
    if (err_json_bom(text, len, path, e)) return -1;
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        long line, col;
        err_line_col(text, end ? (size_t)(end - text) : 0, &line, &col);
        return err_set(e, "%s:%ld:%ld: not valid JSON here, expected a scenario object", path, line, col);
    }
    plan_hash_hex(text, len, p->hash);
    int rc = (p->path = pl_dup(path)) ? pl_root(&c, root, p) : err_set(e, "out of memory");
    cJSON_Delete(root);
    keyset_free(&methods);
    keyset_free(&names);
    keyset_free(&conds);
    if (rc) {
        struct err keep;
        if (e) keep = *e;
        plan_free(p);
        if (e) *e = keep;
    }
    return rc;
}

int plan_load(struct plan *p, const char *path, struct err *e)
{
    char *text;
    size_t len;
    memset(p, 0, sizeof *p);
    if (fileio_read(path, PLAN_FILE_MAX, &text, &len, e)) return -1;
    int rc = plan_parse(p, text, len, path, e);
    free(text);
    return rc;
}

void plan_free(struct plan *p)
{
    if (!p) return;
    for (size_t k = 0; k < p->n_methods; k++) {
        free(p->methods[k].label);
        free(p->methods[k].name);
    }
    for (size_t k = 0; k < p->n_conds; k++) {
        struct plan_cond *d = &p->conds[k];
        free(d->name); free(d->chain); free(d->on); free(d->axis_stage); free(d->axis_key);
        chain_free(d->parsed);
        free(d->values); free(d->seeds);
    }
    for (size_t k = 0; k < p->n_cells; k++) free(p->cells[k].chain);
    for (size_t k = 0; k < p->n_criteria; k++) {
        free(p->criteria[k].text);
        free(p->criteria[k].metric);
    }
    free(p->methods); free(p->conds); free(p->cells); free(p->criteria);
    free(p->path); free(p->name); free(p->map_rec); free(p->query_rec);
    keyset_free(&p->ids);
    memset(p, 0, sizeof *p);
}

long plan_find_cell(const struct plan *p, const char *id)
{
    size_t k;
    return keyset_find(&p->ids, id, strlen(id), &k) ? (long)k : -1;
}

int plan_parse_shard(const char *s, int *i, int *n, struct err *e)
{
    long a, b;
    char *end;
    a = strtol(s, &end, 10);
    if (end == s || *end != '/') goto bad;
    const char *t = end + 1;
    b = strtol(t, &end, 10);
    if (end == t || *end || b < 1 || b > 100000 || a < 0 || a >= b) goto bad;
    *i = (int)a;
    *n = (int)b;
    return 0;
bad:
    return err_set(e, "shard '%s' is not valid, expected I/N with 0 <= I < N (e.g. 0/3)", s);
}

int plan_in_shard(size_t k, int i, int n)
{
    return n <= 1 || (int)(k % (size_t)n) == i;
}
