/* protocol.c: protocol names, defaults and range checks. */
#include "metrics/protocol.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

const char *const protocol_mode_names[] = {"loop", "reloc", NULL};
const char *const protocol_counting_names[] = {"strict", "lenient", NULL};

const char *protocol_mode_name(enum protocol_mode m)
{
    return m == PROTOCOL_RELOC ? protocol_mode_names[1] : protocol_mode_names[0];
}

const char *protocol_counting_name(enum protocol_counting c)
{
    return c == PROTOCOL_LENIENT ? protocol_counting_names[1] : protocol_counting_names[0];
}

static int protocol_pick(const char *const *names, const char *s)
{
    for (int k = 0; s && names[k]; k++)
        if (!strcmp(names[k], s)) return k;
    return -1;
}

int protocol_mode_parse(const char *s, enum protocol_mode *out)
{
    int k = protocol_pick(protocol_mode_names, s);
    if (k < 0) return -1;
    *out = (enum protocol_mode)k;
    return 0;
}

int protocol_counting_parse(const char *s, enum protocol_counting *out)
{
    int k = protocol_pick(protocol_counting_names, s);
    if (k < 0) return -1;
    *out = (enum protocol_counting)k;
    return 0;
}

void protocol_defaults(struct protocol *p)
{
    p->mode = PROTOCOL_LOOP;
    p->counting = PROTOCOL_STRICT;
    p->r_pos_m = 3.0;
    p->r_neg_m = 3.0;
    p->exclusion_s = 30.0;
    p->exclusion_scans = -1;
    p->planar = 0;
    p->top_k = 25;
}

int protocol_check(const struct protocol *p, char *msg, unsigned long n)
{
    if (!(p->r_pos_m > 0) || !isfinite(p->r_pos_m))
        return snprintf(msg, n, "revisit radius must be a positive number of metres"), -1;
    if (!(p->r_neg_m >= p->r_pos_m) || !isfinite(p->r_neg_m))
        return snprintf(msg, n, "wrong-match radius must be at least the revisit radius (%g m)", p->r_pos_m), -1;
    if (!(p->exclusion_s >= 0) || !isfinite(p->exclusion_s))
        return snprintf(msg, n, "time exclusion must be a non-negative number of seconds"), -1;
    if (p->top_k < 1 || p->top_k > 100000)
        return snprintf(msg, n, "top-k must be a whole number from 1 to 100000"), -1;
    return 0;
}
