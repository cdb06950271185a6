/* eval_command.c: the `revisit eval` command line equivalent to a spec, for
 * the reproducibility record of a sweep cell. */
#include "harness/run/eval.h"

#include <string.h>

#include "harness/base/textbuf.h"

/* One word for a POSIX shell: bare when it holds only characters no shell
 * treats specially, else in single quotes with each ' written as '\''. */
static void word(struct textbuf *b, const char *w)
{
    textbuf_put(b, " ");
    if (*w && strspn(w, "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789_./:=,+@%-") == strlen(w)) {
        textbuf_put(b, "%s", w);
        return;
    }
    textbuf_put(b, "'");
    for (; *w; w++) {
        if (*w == '\'') textbuf_put(b, "'\\''");
        else textbuf_put(b, "%c", *w);
    }
    textbuf_put(b, "'");
}

static void opt(struct textbuf *b, const char *name, const char *value)
{
    if (!value) return;
    textbuf_put(b, " %s", name);
    word(b, value);
}

static void protocol_words(struct textbuf *b, const struct protocol *p)
{
    textbuf_put(b, " --mode %s --radius %.17g --radius-neg %.17g", protocol_mode_name(p->mode), p->r_pos_m, p->r_neg_m);
    if (p->mode == PROTOCOL_LOOP && p->exclusion_scans >= 0) textbuf_put(b, " --exclude-scans %ld", p->exclusion_scans);
    else if (p->mode == PROTOCOL_LOOP) textbuf_put(b, " --exclude-s %.17g", p->exclusion_s);
    if (p->planar) textbuf_put(b, " --planar");
    textbuf_put(b, " --counting %s --top-k %d", protocol_counting_name(p->counting), p->top_k);
}

size_t eval_spec_command(const struct eval_spec *s, const char *out_dir, char *out, size_t n)
{
    struct textbuf b = textbuf_init(out, n);
    textbuf_put(&b, "revisit eval");
    opt(&b, "--map", s->map_rec);
    opt(&b, "--query", s->query_rec);
    opt(&b, "--method", s->method);
    opt(&b, "--plugin-path", s->plugin_path);
    if (s->chain) {
        opt(&b, "--chain", s->chain);
        opt(&b, "--on", s->on);
        textbuf_put(&b, " --seed %llu", (unsigned long long)s->seed);
    }
    protocol_words(&b, &s->protocol);
    textbuf_put(&b, " --bootstrap %d --bootstrap-seed %llu", s->bootstrap, (unsigned long long)s->bootstrap_seed);
    if (s->top_c > 0) textbuf_put(&b, " --prefilter %d", s->top_c);
    if (s->matrix_scans) textbuf_put(&b, " --matrix-scans %ld", s->matrix_scans > 0 ? s->matrix_scans : 0L);
    opt(&b, "--condition", s->condition);
    if (s->isolate) textbuf_put(&b, " --isolate");
    if (s->time_limit_s > 0) textbuf_put(&b, " --time-limit %.17g", s->time_limit_s);
    if (s->mem_limit_mb > 0) textbuf_put(&b, " --mem-limit %zu", s->mem_limit_mb);
    opt(&b, "--out", out_dir ? out_dir : s->out_dir);
    return b.len;
}
