/* err.h: the error record every library function fills, and message helpers.
 *
 * A function that can fail takes `struct err *e` last and returns 0 on
 * success or -1 on failure, having written one line into e->msg of the form
 *     FILE:LINE: what was wrong, expected what
 * Only main() prints the message and picks the exit code.  e may be NULL
 * (the message is then dropped).  Messages are lower-case, no final stop.
 *
 *     if (n % 16) return err_at(e, path, 0, "size %zu is not a multiple of 16", n);
 */
#ifndef RV_ERR_H
#define RV_ERR_H

#include <stddef.h>

#define ERR_MSG_MAX 1024

struct err {
    char msg[ERR_MSG_MAX];
};

/* Set e->msg from a printf format; returns -1 so `return err_set(...)` reads well. */
int err_set(struct err *e, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Same with a position prefix: "file:line: " (line 0 omits it, file NULL omits both). */
int err_at(struct err *e, const char *file, long line, const char *fmt, ...)
    __attribute__((format(printf, 4, 5)));

/* Prefix an existing message with "what: " (e.g. the scan being read). Returns -1. */
int err_wrap(struct err *e, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* Translate a byte offset in a text buffer into 1-based line and column. */
void err_line_col(const char *text, size_t offset, long *line, long *col);

/* In e's message, the first occurrence of from becomes to (a temporary
 * file or folder named as the one the user gave). No-op when absent. */
void err_subst(struct err *e, const char *from, const char *to);

/* -1 with "PATH:1:1: starts with a UTF-8 byte-order mark ..." when text
 * begins with EF BB BF (JSON readers refuse it by name instead of calling it
 * an invalid character); 0 otherwise. */
int err_json_bom(const char *text, size_t len, const char *path, struct err *e);

/* 1 when an snprintf into size bytes that returned n was cut (or failed):
 *     if (err_cut(snprintf(p, sizeof p, "%s/x", dir), sizeof p)) return err_at(e, dir, 0, "path too long");
 * Messages cut by err_set, err_at and err_wrap end in "..." instead. */
static inline int err_cut(int n, size_t size)
{
    return n < 0 || (size_t)n >= size;
}

#endif
