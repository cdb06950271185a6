/* blas.c: OpenBLAS kernel choice (one re-exec) and thread count. */
#include "harness/base/blas.h"

#include <cblas.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <unistd.h>

#define BLAS_ENV_CORE "OPENBLAS_CORETYPE"
#define BLAS_ENV_FALLBACK "REVISIT_BLAS_FALLBACK"   /* the kernel the library picked; set once */
#define BLAS_WIDE "Haswell"                         /* AVX2 + FMA kernels */

/* OpenBLAS x86 kernel names older than AVX2 (its DYNAMIC_ARCH core table). */
static const char *const blas_old[] = {
    "Unknown", "Katmai", "Coppermine", "Northwood", "Prescott", "Banias", "Atom", "Core2",
    "Penryn", "Dunnington", "Nehalem", "Athlon", "Opteron", "Opteron_SSE3", "Barcelona",
    "Nano", "Sandybridge", "Bobcat", "Bulldozer", "Piledriver", "Steamroller", NULL,
};

static int blas_is_old(const char *name)
{
    for (const char *const *k = blas_old; *k; k++)
        if (!strcasecmp(name, *k)) return 1;
    return 0;
}

static int blas_cpu_wide(void)
{
#if defined(__x86_64__) || defined(__i386__)
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma");
#else
    return 0;
#endif
}

/* Set and not empty: an empty value counts as not set. */
static int blas_env_set(const char *name)
{
    const char *v = getenv(name);
    return v && *v;
}

const char *blas_kernel(void)
{
    const char *k = openblas_get_corename();
    return k && *k ? k : "unknown";
}

void blas_choose_kernel(char **argv)
{
    if (blas_env_set(BLAS_ENV_CORE) || getenv(BLAS_ENV_FALLBACK)) return;
    const char *k = blas_kernel();
    if (!blas_is_old(k) || !blas_cpu_wide()) return;
    if (setenv(BLAS_ENV_FALLBACK, k, 1) || setenv(BLAS_ENV_CORE, BLAS_WIDE, 1)) goto restore;
    fflush(NULL);
    execv("/proc/self/exe", argv);
restore:   /* no exec: run on with the library's own kernel */
    unsetenv(BLAS_ENV_CORE);
    unsetenv(BLAS_ENV_FALLBACK);
}

void blas_describe(char *buf, size_t size)
{
    const char *cfg = openblas_get_config(), *fb = getenv(BLAS_ENV_FALLBACK);
    char lib[64] = "OpenBLAS";
    if (cfg) {  /* "OpenBLAS 0.3.21 DYNAMIC_ARCH ...": the first two words */
        const char *sp = strchr(cfg, ' ');
        sp = sp ? strchr(sp + 1, ' ') : NULL;
        size_t n = sp ? (size_t)(sp - cfg) : strlen(cfg);
        snprintf(lib, sizeof lib, "%.*s", (int)(n < sizeof lib ? n : sizeof lib - 1), cfg);
    }
    const char *core = getenv(BLAS_ENV_CORE);
    if (core && !*core) core = NULL;
    char how[96];
    if (fb && core) snprintf(how, sizeof how, "chosen by revisit; the library picked %.40s", fb);
    else if (core) snprintf(how, sizeof how, "set by " BLAS_ENV_CORE);
    else snprintf(how, sizeof how, "the library's choice");
    int n = blas_threads();
    snprintf(buf, size, "%s, kernel %s (%s), %d thread%s", lib, blas_kernel(), how, n, n == 1 ? "" : "s");
}

/* OpenBLAS's own shutdown of its worker threads (exported by the library,
 * which calls it itself before a fork); weak, so a library without it
 * leaves the workers running. */
extern int blas_thread_shutdown_(void) __attribute__((weak));

void blas_one_thread(void)
{
    if (blas_env_set("OPENBLAS_NUM_THREADS") || blas_env_set("GOTO_NUM_THREADS") || blas_env_set("OMP_NUM_THREADS"))
        return;
    openblas_set_num_threads(1);
    if (blas_thread_shutdown_) blas_thread_shutdown_();
}

int blas_threads(void)
{
    return openblas_get_num_threads();
}

void blas_set_threads(int n)
{
    openblas_set_num_threads(n < 1 ? 1 : n);
}
