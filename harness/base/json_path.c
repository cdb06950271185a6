/* json_path.c: find the text position of a JSON path (for line:column in messages). */
#include "harness/base/json_path.h"

#include <string.h>

#define JSON_PATH_DEPTH 256   /* deeper nesting is refused, never recursed into */

struct jp_text {
    const char *s;
    size_t n, at;
};

static void jp_ws(struct jp_text *t)
{
    while (t->at < t->n && strchr(" \t\r\n", t->s[t->at])) t->at++;
}

/* Past a string starting at the quote under t->at. */
static int jp_skip_string(struct jp_text *t)
{
    for (t->at++; t->at < t->n; t->at++) {
        if (t->s[t->at] == '\\') t->at++;
        else if (t->s[t->at] == '"') return t->at++, 0;
    }
    return -1;
}

/* Past one value (any kind), brackets counted, strings skipped whole. */
static int jp_skip_value(struct jp_text *t)
{
    jp_ws(t);
    if (t->at >= t->n) return -1;
    char c = t->s[t->at];
    if (c == '"') return jp_skip_string(t);
    if (c != '{' && c != '[') {
        while (t->at < t->n && !strchr(",]} \t\r\n", t->s[t->at])) t->at++;
        return 0;
    }
    int depth = 0;
    while (t->at < t->n) {
        c = t->s[t->at];
        if (c == '"') { if (jp_skip_string(t)) return -1; continue; }
        if (c == '{' || c == '[') { if (++depth > JSON_PATH_DEPTH) return -1; }
        else if ((c == '}' || c == ']') && --depth == 0) return t->at++, 0;
        t->at++;
    }
    return -1;
}

/* In the object at t->at, move to the member key (len bytes); t->at is left
 * at the key's quote.  0 or -1. */
static int jp_member(struct jp_text *t, const char *key, size_t len)
{
    jp_ws(t);
    if (t->at >= t->n || t->s[t->at] != '{') return -1;
    t->at++;
    for (;;) {
        jp_ws(t);
        if (t->at >= t->n || t->s[t->at] != '"') return -1;
        size_t start = t->at;
        if (jp_skip_string(t)) return -1;
        if (t->at - start - 2 == len && !memcmp(t->s + start + 1, key, len)) return t->at = start, 0;
        jp_ws(t);
        if (t->at >= t->n || t->s[t->at++] != ':' || jp_skip_value(t)) return -1;
        jp_ws(t);
        if (t->at >= t->n || t->s[t->at++] != ',') return -1;
    }
}

/* In the array at t->at, move to element k's first byte.  0 or -1. */
static int jp_element(struct jp_text *t, unsigned long k)
{
    jp_ws(t);
    if (t->at >= t->n || t->s[t->at] != '[') return -1;
    t->at++;
    for (unsigned long i = 0; i < k; i++) {
        if (jp_skip_value(t)) return -1;
        jp_ws(t);
        if (t->at >= t->n || t->s[t->at++] != ',') return -1;
    }
    jp_ws(t);
    return t->at < t->n && t->s[t->at] != ']' ? 0 : -1;
}

int json_path_find(const char *text, size_t len, const char *path, size_t *offset)
{
    struct jp_text t = {text, len, 0};
    jp_ws(&t);
    const char *p = path;
    while (*p) {
        if (*p == '[') {
            unsigned long k = 0;
            const char *q = p + 1;
            while (*q >= '0' && *q <= '9') k = k * 10 + (unsigned long)(*q++ - '0');
            if (*q != ']' || q == p + 1 || jp_element(&t, k)) return -1;
            p = q + 1;
        } else {
            if (*p == '.') p++;
            size_t klen = strcspn(p, ".[");
            if (!klen || jp_member(&t, p, klen)) return -1;
            p += klen;
            if (*p) {   /* go on into the value: past the key and the colon */
                if (jp_skip_string(&t)) return -1;
                jp_ws(&t);
                if (t.at >= t.n || t.s[t.at++] != ':') return -1;
                jp_ws(&t);
            }
        }
    }
    *offset = t.at;
    return 0;
}
