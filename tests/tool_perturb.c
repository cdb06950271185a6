/* tool_perturb.c: apply a chain to one raw scan, for the Python cross-checks.
 *
 *     tool_perturb CHAIN SEED SCAN_INDEX IN.bin OUT.bin
 *
 * IN.bin / OUT.bin hold float32 little-endian x y z intensity records.  The
 * normalised chain and per-stage counts go to stdout as "stage in out" lines.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "perturb/chain.h"

static int run(char **argv, struct err *e)
{
    struct chain *ch = NULL;
    char *buf = NULL;
    size_t len = 0;
    int rc = -1;
    struct cloud c;
    struct chain_scratch s;
    struct chain_stats st;
    cloud_init(&c);
    chain_scratch_init(&s);
    if (chain_parse(argv[1], &ch, e)) goto out;
    if (fileio_read(argv[4], (size_t)1 << 31, &buf, &len, e)) goto out;
    size_t n = len / 16;
    if (cloud_reserve(&c, n ? n : 1)) { err_set(e, "out of memory"); goto out; }
    memcpy(c.pts, buf, n * 16);
    c.n = n;
    if (chain_apply(ch, &c, strtoull(argv[2], NULL, 10), (uint32_t)strtoul(argv[3], NULL, 10), &s,
                    &st, e))
        goto out;
    if (fileio_write(argv[5], c.pts, c.n * 16, e)) goto out;
    char text[2048];
    chain_format(ch, text, sizeof text);
    printf("chain %s\n", text);
    for (size_t i = 0; i < st.n_stages; i++)
        printf("%s %zu %zu\n", chain_stage_name(ch, i), st.in[i], st.out[i]);
    rc = 0;
out:
    free(buf);
    cloud_free(&c);
    chain_scratch_free(&s);
    chain_free(ch);
    return rc;
}

int main(int argc, char **argv)
{
    struct err e = {{0}};
    if (argc != 6) {
        fprintf(stderr, "usage: tool_perturb CHAIN SEED SCAN_INDEX IN.bin OUT.bin\n");
        return 2;
    }
    if (run(argv, &e)) {
        fprintf(stderr, "tool_perturb: %s\n", e.msg);
        return 2;
    }
    return 0;
}
