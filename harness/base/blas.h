/* blas.h: which OpenBLAS kernel runs, choosing a wider one when the library
 * falls back, and how many threads OpenBLAS may use.
 *
 * OpenBLAS picks its kernel once, when the library is loaded, from the CPU
 * model it knows; on a model it does not know it falls back to an old SSE
 * kernel (e.g. "Prescott") even when the CPU has AVX2 and FMA, and runs
 * sgemm several times slower.  The kernel can only be chosen before the
 * library loads, through OPENBLAS_CORETYPE, so blas_choose_kernel re-executes
 * the program once:
 *
 *     OPENBLAS_CORETYPE set by the user        keep it, never touch it
 *     library kernel is AVX2 or newer          keep it
 *     pre-AVX2 kernel, CPU has AVX2 and FMA    set OPENBLAS_CORETYPE=Haswell,
 *                                              REVISIT_BLAS_FALLBACK=<old name>,
 *                                              exec /proc/self/exe argv once
 *     REVISIT_BLAS_FALLBACK already set        never exec again (no loop)
 *
 * Results do not depend on the kernel for the built-in dense paths (scores
 * only rank candidates; distances are recomputed in double); methods that
 * call LAPACK may differ in the last bits of a descriptor.
 *
 *     int main(int argc, char **argv) { blas_choose_kernel(argv); ... }
 *     char txt[160]; blas_describe(txt, sizeof txt);   // for --version
 *
 * Failure contract: blas_choose_kernel returns only when no exec was needed
 * or the exec failed (the environment is then restored and the library's
 * own kernel kept); nothing here allocates or fails otherwise.  Thread count
 * calls are process-wide (OpenBLAS has one setting): call them from one
 * thread between parallel stages, never while another thread runs BLAS.
 */
#ifndef RV_BLAS_H
#define RV_BLAS_H

#include <stddef.h>

/* Re-execute once with a wider kernel when the rules above ask for it. */
void blas_choose_kernel(char **argv);

/* The kernel OpenBLAS runs now, e.g. "Haswell" (never NULL). */
const char *blas_kernel(void);

/* One line for --version: library, kernel and how it was chosen, e.g.
 * "OpenBLAS 0.3.21, kernel Haswell (chosen by revisit; the library picked Prescott)". */
void blas_describe(char *buf, size_t size);

/* One OpenBLAS thread for the whole run, and its idle workers stopped,
 * unless the user set OPENBLAS_NUM_THREADS, GOTO_NUM_THREADS or
 * OMP_NUM_THREADS (then nothing changes).  revisit runs its BLAS calls on
 * threads of its own pool (single-threaded sgemm per block, small LAPACK
 * calls per scan), so OpenBLAS's workers only compete: the library starts
 * them when it loads and each spins in sched_yield for about 2^28 cycles
 * before it sleeps, a whole core for the first ~0.1 s of every command
 * (a 300-scan eval ran 105 ms with them, 83 ms without). */
void blas_one_thread(void);

/* OpenBLAS threads now, and a new count (>= 1); see the thread note above. */
int blas_threads(void);
void blas_set_threads(int n);

#endif
