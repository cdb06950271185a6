/* err.c: error records with file:line positions. */
#include "harness/base/err.h"

#include <stdarg.h>
#include <stdio.h>
#include <string.h>

/* A message cut to fit ends in "..." so no one takes it for the whole. */
static void err_mark_cut(struct err *e, int n, size_t at)
{
    if (n >= 0 && (size_t)n < sizeof e->msg - at) return;
    memcpy(e->msg + sizeof e->msg - 4, "...", 4);
}

int err_set(struct err *e, const char *fmt, ...)
{
    if (!e) return -1;
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(e->msg, sizeof e->msg, fmt, ap);
    va_end(ap);
    err_mark_cut(e, n, 0);
    return -1;
}

int err_at(struct err *e, const char *file, long line, const char *fmt, ...)
{
    if (!e) return -1;
    size_t used = 0;
    if (file && line > 0)
        used = (size_t)snprintf(e->msg, sizeof e->msg, "%s:%ld: ", file, line);
    else if (file)
        used = (size_t)snprintf(e->msg, sizeof e->msg, "%s: ", file);
    if (used >= sizeof e->msg) used = sizeof e->msg - 1;
    va_list ap;
    va_start(ap, fmt);
    int n = vsnprintf(e->msg + used, sizeof e->msg - used, fmt, ap);
    va_end(ap);
    err_mark_cut(e, n, used);
    return -1;
}

int err_wrap(struct err *e, const char *fmt, ...)
{
    if (!e) return -1;
    char prefix[ERR_MSG_MAX], old[ERR_MSG_MAX];
    memcpy(old, e->msg, sizeof old);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(prefix, sizeof prefix, fmt, ap);
    va_end(ap);
    err_mark_cut(e, snprintf(e->msg, sizeof e->msg, "%s: %s", prefix, old), 0);
    return -1;
}

void err_subst(struct err *e, const char *from, const char *to)
{
    if (!e || !from[0]) return;
    char *at = strstr(e->msg, from);
    if (!at) return;
    char rest[ERR_MSG_MAX];
    snprintf(rest, sizeof rest, "%s", at + strlen(from));
    size_t head = (size_t)(at - e->msg);
    err_mark_cut(e, snprintf(at, sizeof e->msg - head, "%s%s", to, rest), head);
}

int err_json_bom(const char *text, size_t len, const char *path, struct err *e)
{
    if (len < 3 || memcmp(text, "\xEF\xBB\xBF", 3)) return 0;
    return err_set(e, "%s:1:1: starts with a UTF-8 byte-order mark (bytes EF BB BF), expected plain JSON; "
                   "save the file without the mark", path);
}

void err_line_col(const char *text, size_t offset, long *line, long *col)
{
    long l = 1, c = 1;
    for (size_t i = 0; i < offset && text[i]; i++) {
        if (text[i] == '\n') { l++; c = 1; } else c++;
    }
    *line = l;
    *col = c;
}
