/* fuzz_util.h: shared by tests/fuzz_*.c.  Readers take paths, so each input
 * is written to a per-process scratch file first. */
#ifndef RV_FUZZ_UTIL_H
#define RV_FUZZ_UTIL_H

#include <stdint.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

/* Write data to /tmp/rvfuzz.PID/<name>; returns the path in out (size n), or NULL. */
static inline const char *fuzz_file(char *out, size_t n, const char *name,
                                    const uint8_t *data, size_t size)
{
    char dir[64];
    snprintf(dir, sizeof dir, "/tmp/rvfuzz.%ld", (long)getpid());
    mkdir(dir, 0700);
    snprintf(out, n, "%s/%s", dir, name);
    FILE *f = fopen(out, "wb");
    if (!f) return NULL;
    if (size) fwrite(data, 1, size, f);
    fclose(f);
    return out;
}

#endif
