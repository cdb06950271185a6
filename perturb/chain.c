/* chain.c: the chain parser, the normalised text, and chain_apply. */
#include "perturb/chain.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/opt.h"
#include "perturb/stage.h"

/* ---- where a chain applies ---------------------------------------------- */

int chain_on_parse(const char *text, enum chain_on *out, struct err *e)
{
    int k = side_lookup(text);
    if (k < 0) return err_set(e, "unknown chain target '%s', expected " SIDE_CHOICES, text ? text : "");
    *out = (enum chain_on)k;
    return 0;
}

const char *chain_on_name(enum chain_on on)
{
    return (unsigned)on <= SIDE_BOTH ? side_names[on] : "?";
}

int chain_on_map(enum chain_on on) { return on == CHAIN_ON_MAP || on == CHAIN_ON_BOTH; }
int chain_on_query(enum chain_on on) { return on == CHAIN_ON_QUERY || on == CHAIN_ON_BOTH; }

/* ---- the stage table ---------------------------------------------------- */

const struct chain_stage_info *chain_stage_info(size_t i)
{
    const struct stage_def *d = stage_def_at(i);
    return d ? &d->info : NULL;
}

static const struct stage_def *def_find(const char *name, size_t len)
{
    const struct stage_def *d;
    for (size_t i = 0; (d = stage_def_at(i)); i++)
        if (strlen(d->info.name) == len && !memcmp(d->info.name, name, len)) return d;
    return NULL;
}

const struct chain_stage_info *chain_stage_find(const char *name)
{
    const struct stage_def *d = def_find(name, strlen(name));
    return d ? &d->info : NULL;
}

/* ---- parse errors ------------------------------------------------------- */

struct parser {
    const char *text;
    size_t pos;
    struct err *e;
};

/* "chain:POS: message" then the text and a caret under POS (a window of the
 * text when it is long). Returns -1. */
static int perr(const struct parser *p, size_t pos, const char *fmt, ...)
    __attribute__((format(printf, 3, 4)));
static int perr(const struct parser *p, size_t pos, const char *fmt, ...)
{
    char what[600];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(what, sizeof what, fmt, ap);
    va_end(ap);
    size_t len = strlen(p->text), from = pos > 60 ? pos - 60 : 0;
    int show = (int)(len - from < 120 ? len - from : 120);
    const char *dots = from ? "..." : "";
    int caret = (int)(pos - from + strlen(dots));
    return err_set(p->e, "chain:%zu: %s\n  %s%.*s\n  %*s^", pos + 1, what, dots, show,
                   p->text + from, caret, "");
}

static void skip_spaces(struct parser *p)
{
    while (p->text[p->pos] == ' ' || p->text[p->pos] == '\t') p->pos++;
}

static size_t word_len(const char *s)
{
    size_t n = 0;
    while (isalnum((unsigned char)s[n]) || s[n] == '_') n++;
    return n;
}

/* "a, b, c" of every stage name into buf. */
static const char *stage_names(char *buf, size_t n)
{
    const struct stage_def *d;
    size_t used = 0;
    buf[0] = 0;
    for (size_t i = 0; (d = stage_def_at(i)) && used < n; i++)
        used += (size_t)snprintf(buf + used, n - used, "%s%s", i ? ", " : "", d->info.name);
    return buf;
}

static const char *param_names(const struct chain_stage_info *in, char *buf, size_t n)
{
    size_t used = 0;
    buf[0] = 0;
    for (size_t k = 0; k < in->n_params && used < n; k++)
        used += (size_t)snprintf(buf + used, n - used, "%s%s", k ? ", " : "", in->params[k].key);
    return buf;
}

/* ---- values ------------------------------------------------------------- */

static int parse_number(struct parser *p, const struct chain_param_info *pi,
                        struct stage *st, int k)
{
    const char *s = p->text + p->pos;
    size_t at = p->pos;
    if (!strncmp(s, "random", 6) && word_len(s) == 6) {
        if (!pi->may_random)
            return perr(p, at, "'random' is not allowed for '%s', expected %s", pi->key, pi->expect);
        st->random |= 1u << k;
        p->pos += 6;
        return 0;
    }
    double v = 0;
    size_t nlen, ulen;   /* the scanner length and time options share (harness/base/opt.h) */
    if (opt_scan_number(s, &v, &nlen, &ulen))
        return perr(p, at, "expected %s for '%s'%s", pi->expect, pi->key,
                    pi->may_random ? " (or random)" : "");
    p->pos += nlen;
    const char *end = s + nlen;
    if (ulen && (strlen(pi->unit) != ulen || memcmp(end, pi->unit, ulen)))
        return perr(p, p->pos, "unit '%.*s' does not fit '%s', expected %s%s", (int)ulen, end,
                    pi->key, *pi->unit ? pi->unit : "no unit", *pi->unit ? " or no unit" : "");
    p->pos += ulen;
    if (v < pi->min || v > pi->max)
        return perr(p, at, "%s=%.*s is out of range, expected %s", pi->key,
                    (int)(p->pos - at), p->text + at, pi->expect);
    st->v[k] = v;
    st->random &= ~(1u << k);
    return 0;
}

static int parse_choice(struct parser *p, const struct chain_param_info *pi, struct stage *st,
                        int k)
{
    const char *s = p->text + p->pos;
    size_t len = word_len(s), idx = 0;
    for (const char *c = pi->choices; *c; idx++) {
        size_t clen = strcspn(c, "|");
        if (clen == len && len && !memcmp(c, s, len)) {
            st->v[k] = (double)idx;
            p->pos += len;
            return 0;
        }
        c += clen + (c[clen] == '|');
    }
    return perr(p, p->pos, "expected %s for '%s'", pi->expect, pi->key);
}

static int parse_list(struct parser *p, const struct chain_param_info *pi, struct stage *st,
                      int k)
{
    (void)k;
    memset(st->list, 0, sizeof st->list);
    for (;;) {
        const char *s = p->text + p->pos;
        char *end = (char *)s;
        long v = -1;
        if (isdigit((unsigned char)*s)) v = strtol(s, &end, 10);
        if (end == s || v < pi->min || v > pi->max || v > 255)
            return perr(p, p->pos, "expected %s for '%s'", pi->expect, pi->key);
        st->list[v / 64] |= 1ull << (v % 64);
        p->pos += (size_t)(end - s);
        if (p->text[p->pos] != '/') return 0;
        p->pos++;
    }
}

static int parse_value(struct parser *p, const struct chain_param_info *pi, struct stage *st,
                       int k)
{
    switch (pi->kind) {
    case CHAIN_NUM: return parse_number(p, pi, st, k);
    case CHAIN_CHOICE: return parse_choice(p, pi, st, k);
    case CHAIN_LIST: return parse_list(p, pi, st, k);
    }
    return perr(p, p->pos, "internal: parameter kind %d", (int)pi->kind);
}

/* ---- stages ------------------------------------------------------------- */

static void stage_defaults(struct stage *st, const struct stage_def *d)
{
    memset(st, 0, sizeof *st);
    st->def = d;
    for (size_t k = 0; k < d->info.n_params; k++) {
        st->v[k] = d->info.params[k].def;
        if (d->info.params[k].def_random) st->random |= 1u << k;
    }
}

static int find_param(const struct chain_stage_info *in, const char *s, size_t len)
{
    for (size_t k = 0; k < in->n_params; k++)
        if (strlen(in->params[k].key) == len && !memcmp(in->params[k].key, s, len)) return (int)k;
    return -1;
}

/* key=value pairs after ':'; pos_of[k] records where parameter k was given. */
static int parse_params(struct parser *p, struct stage *st, size_t *pos_of)
{
    const struct chain_stage_info *in = &st->def->info;
    char names[400];
    unsigned seen = 0;
    do {
        skip_spaces(p);
        const char *s = p->text + p->pos;
        size_t len = word_len(s);
        if (!len)
            return perr(p, p->pos, "expected a parameter of '%s' (one of %s)", in->name,
                        param_names(in, names, sizeof names));
        int k = find_param(in, s, len);
        if (k < 0)
            return perr(p, p->pos, "stage '%s' has no parameter '%.*s', expected one of %s",
                        in->name, (int)len, s, param_names(in, names, sizeof names));
        if (seen & (1u << k)) return perr(p, p->pos, "parameter '%s' given twice", in->params[k].key);
        seen |= 1u << k;
        pos_of[k] = p->pos;
        p->pos += len;
        skip_spaces(p);
        if (p->text[p->pos] != '=')
            return perr(p, p->pos, "expected '=' after '%s'", in->params[k].key);
        p->pos++;
        skip_spaces(p);
        if (parse_value(p, &in->params[k], st, k)) return -1;
        skip_spaces(p);
    } while (p->text[p->pos] == ',' && ++p->pos);
    return 0;
}

static int parse_stage(struct parser *p, struct stage *st)
{
    char names[400];
    skip_spaces(p);
    size_t at = p->pos, len = word_len(p->text + at);
    if (!len)
        return perr(p, at, "expected a stage name (one of %s)", stage_names(names, sizeof names));
    const struct stage_def *d = def_find(p->text + at, len);
    if (!d)
        return perr(p, at, "unknown stage '%.*s', expected one of %s", (int)len, p->text + at,
                    stage_names(names, sizeof names));
    stage_defaults(st, d);
    p->pos += len;
    skip_spaces(p);
    size_t pos_of[CHAIN_MAX_PARAMS];
    for (int k = 0; k < CHAIN_MAX_PARAMS; k++) pos_of[k] = at;
    if (p->text[p->pos] == ':') {
        p->pos++;
        if (parse_params(p, st, pos_of)) return -1;
    }
    int draw = find_param(&d->info, "draw", 4);
    st->per_recording = draw >= 0 && st->v[draw] == 1;
    const char *why = NULL;
    int bad = d->check ? d->check(st, &why) : -1;
    if (bad >= 0)
        return perr(p, pos_of[bad], "stage '%s': '%s' %s", d->info.name,
                    d->info.params[bad].key, why);
    return 0;
}

int chain_parse(const char *text, struct chain **out, struct err *e)
{
    *out = NULL;
    struct parser p = {text ? text : "", 0, e};
    struct chain *ch = calloc(1, sizeof *ch);
    if (!ch) return err_set(e, "chain: out of memory");
    for (;;) {
        if (ch->n == CHAIN_MAX_STAGES) {
            chain_free(ch);
            return perr(&p, p.pos, "too many stages, expected at most %d", CHAIN_MAX_STAGES);
        }
        if (parse_stage(&p, &ch->st[ch->n])) {
            chain_free(ch);
            return -1;
        }
        ch->n++;
        skip_spaces(&p);
        if (!p.text[p.pos]) break;
        if (p.text[p.pos] != '+') {
            chain_free(ch);
            return perr(&p, p.pos, "expected '+', ',' or the end of the chain, found '%c'",
                        p.text[p.pos]);
        }
        p.pos++;
    }
    *out = ch;
    return 0;
}

/* Stage st of ch with parameter k set to value, checked as the parser
 * checks a number given in the text. */
static int with_set(struct stage *st, int k, double value, struct err *e)
{
    const struct chain_stage_info *in = &st->def->info;
    const struct chain_param_info *pi = &in->params[k];
    if (pi->kind != CHAIN_NUM)
        return err_set(e, "%s.%s takes %s, not a swept number", in->name, pi->key, pi->expect);
    if (!(value >= pi->min && value <= pi->max))
        return err_set(e, "%s.%s = %g is out of range, expected %s", in->name, pi->key, value, pi->expect);
    st->v[k] = value;
    st->random &= ~(1u << k);
    const char *why = NULL;
    int bad = st->def->check ? st->def->check(st, &why) : -1;
    if (bad >= 0)
        return err_set(e, "%s.%s = %g: '%s' %s", in->name, pi->key, value, in->params[bad].key, why);
    return 0;
}

int chain_with_value(const struct chain *ch, const char *stage, const char *key, double value,
                     struct chain **out, struct err *e)
{
    *out = NULL;
    const struct stage_def *d = def_find(stage, strlen(stage));
    char names[400];
    if (!d) return err_set(e, "unknown stage '%s', expected one of %s", stage, stage_names(names, sizeof names));
    int k = find_param(&d->info, key, strlen(key));
    if (k < 0)
        return err_set(e, "stage '%s' has no parameter '%s', expected one of %s", stage, key,
                       param_names(&d->info, names, sizeof names));
    struct chain *c = calloc(1, sizeof *c);
    if (!c) return err_set(e, "chain: out of memory");
    if (ch) *c = *ch;
    size_t i = 0;
    while (i < c->n && c->st[i].def != d) i++;
    if (i == c->n) {
        if (c->n == CHAIN_MAX_STAGES) {
            chain_free(c);
            return err_set(e, "no room to add stage '%s', expected at most %d stages", stage, CHAIN_MAX_STAGES);
        }
        stage_defaults(&c->st[c->n++], d);
    }
    if (with_set(&c->st[i], k, value, e)) {
        chain_free(c);
        return -1;
    }
    *out = c;
    return 0;
}

void chain_free(struct chain *ch)
{
    free(ch);
}

int chain_is_identity(const struct chain *ch)
{
    if (!ch->n) return 0;
    for (size_t i = 0; i < ch->n; i++)
        if (!ch->st[i].def->identity || !ch->st[i].def->identity(&ch->st[i])) return 0;
    return 1;
}

size_t chain_stage_count(const struct chain *ch)
{
    return ch->n;
}

const char *chain_stage_name(const struct chain *ch, size_t i)
{
    return i < ch->n ? ch->st[i].def->info.name : NULL;
}
