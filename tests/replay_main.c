/* replay_main.c: run a fuzz target on files, outside the fuzzer.
 *
 *     build/replay/fuzz_pcd tests/corpus/fuzz_pcd/ crash-1234
 *
 * Each argument is a file or a folder of files; each file is fed once to
 * LLVMFuzzerTestOneInput.  Prints one line per file on stderr with -v and
 * "N inputs" on stdout.  A crash or sanitizer report ends the program, so
 * a clean exit means every input was handled.
 */
#include <dirent.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size);

static long replay_file(const char *path, int verbose)
{
    FILE *f = fopen(path, "rb");
    if (!f) { fprintf(stderr, "replay: cannot open %s\n", path); return -1; }
    size_t cap = 1 << 16, n = 0;
    uint8_t *buf = malloc(cap);
    size_t got;
    while (buf && (got = fread(buf + n, 1, cap - n, f)) > 0) {
        n += got;
        if (n == cap) {
            uint8_t *nb = realloc(buf, cap *= 2);
            if (!nb) { free(buf); buf = NULL; }
            else buf = nb;
        }
    }
    fclose(f);
    if (!buf) return -1;
    if (verbose) fprintf(stderr, "replay %s (%zu bytes)\n", path, n);
    LLVMFuzzerTestOneInput(buf, n);
    free(buf);
    return 1;
}

static long replay_path(const char *path, int verbose)
{
    struct stat st;
    if (stat(path, &st)) { fprintf(stderr, "replay: no such file %s\n", path); return -1; }
    if (!S_ISDIR(st.st_mode)) return replay_file(path, verbose);
    struct dirent **names;
    int k = scandir(path, &names, NULL, alphasort);
    if (k < 0) return -1;
    long count = 0;
    int bad = 0;
    for (int j = 0; j < k; j++) {
        if (names[j]->d_name[0] != '.') {
            char full[4096];
            snprintf(full, sizeof full, "%s/%s", path, names[j]->d_name);
            long r = replay_file(full, verbose);
            if (r < 0) bad = 1;
            else count += r;
        }
        free(names[j]);
    }
    free(names);
    return bad ? -1 : count;
}

int main(int argc, char **argv)
{
    int verbose = argc > 1 && !strcmp(argv[1], "-v");
    long total = 0;
    for (int k = 1 + verbose; k < argc; k++) {
        long r = replay_path(argv[k], verbose);
        if (r < 0) return 2;
        total += r;
    }
    printf("%ld inputs\n", total);
    return 0;
}
