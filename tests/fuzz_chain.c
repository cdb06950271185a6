/* fuzz_chain.c: the perturbation chain parser on arbitrary text; a chain
 * that parses is applied to a small scan and its normalised text must parse
 * again to the same text. */
#include <stdlib.h>
#include <string.h>
#include "harness/base/cloud.h"
#include "perturb/chain.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size > 4096) return 0;
    char *text = malloc(size + 1);
    if (!text) return 0;
    memcpy(text, data, size);
    text[size] = 0;
    struct chain *ch = NULL;
    struct err e;
    if (!chain_parse(text, &ch, &e)) {
        char norm[8192], again[8192];
        chain_format(ch, norm, sizeof norm);
        struct chain *ch2 = NULL;
        if (chain_parse(norm, &ch2, &e)) __builtin_trap();  /* normalised text must parse */
        chain_format(ch2, again, sizeof again);
        if (strcmp(norm, again)) __builtin_trap();
        chain_free(ch2);
        struct cloud c;
        cloud_init(&c);
        for (int k = 0; k < 200; k++)
            cloud_push(&c, (float)(10 * __builtin_cos(k * 0.1)), (float)(10 * __builtin_sin(k * 0.1)),
                       (float)(k % 7) - 3.0f, 0.5f);
        struct chain_scratch s;
        chain_scratch_init(&s);
        chain_apply(ch, &c, 7, 3, &s, NULL, &e);
        chain_scratch_free(&s);
        cloud_free(&c);
        chain_free(ch);
    }
    free(text);
    return 0;
}
