/* side.c: the words for the sets of scans (see side.h). */
#include "harness/base/side.h"

#include <string.h>

const char *const side_names[] = {"query", "map", "both", NULL};

int side_lookup(const char *word)
{
    for (int k = 0; word && side_names[k]; k++)
        if (!strcmp(word, side_names[k])) return k;
    return -1;
}
