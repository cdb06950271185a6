/* bench_load.c: scan-load throughput through recording_load_scan, as a ratio
 * to a plain read() loop over the same files in the same run (the floor of
 * what I/O allows); and scan-write throughput of the PCD writer into a
 * staged folder (the path revisit perturb and synth take), as a ratio to
 * open / write() / close of the same bytes.  Writes its own recordings (raw and PCD, 200 scans of
 * 60,000 points by default) into the current folder.  One JSON line per
 * figure on stdout (the PCD scans carry ring and time, as the synthetic
 * generator writes them):
 *   {"bench":"scan_load","layout":"raw","mb_per_s":...,"ratio_to_read":...}
 *   {"bench":"scan_write","layout":"pcd","mb_per_s":...,"ratio_to_write":...}
 * Times are this thread's CPU seconds (user + kernel), so other processes
 * on a shared machine do not count.  Each figure is the best of five rounds, each round running both ways over
 * all scans (order alternating), so both run with the files in the page
 * cache.
 * Env BENCH_LOAD_SCANS / BENCH_LOAD_POINTS change the size. */
#include <fcntl.h>
#include <stdio.h>
#include <time.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/base/fileio.h"
#include "harness/io/recording.h"

static size_t env_size(const char *name, size_t def)
{
    const char *s = getenv(name);
    return s && atol(s) > 0 ? (size_t)atol(s) : def;
}

static int make_recording(const char *dir, enum scan_layout layout, size_t n, size_t pts, struct err *e)
{
    struct recording_sensor s;
    recording_sensor_init(&s);
    s.channels = 64;
    struct recording_writer w;
    struct cloud c;
    cloud_init(&c);
    if (layout == SCAN_PCD && (cloud_enable_ring(&c) || cloud_enable_time(&c))) return err_set(e, "out of memory");
    struct pose *v = calloc(n, sizeof *v);
    int rc = !v || recording_writer_begin(&w, dir, &s, layout, e);
    unsigned seed = 1;
    for (size_t i = 0; !rc && i < n; i++) {
        c.n = 0;
        for (size_t k = 0; k < pts; k++)
            cloud_push(&c, (float)rand_r(&seed) / RAND_MAX * 100, (float)rand_r(&seed) / RAND_MAX * 100,
                       (float)rand_r(&seed) / RAND_MAX * 5, (float)(k % 256));
        double q[4] = {0, 0, 0, 1}, p[3] = {(double)i, 0, 0};
        pose_from_quat(&v[i], 0.1 * (double)i, p, q, e);
        rc = recording_writer_scan(&w, i, &c, e);
    }
    if (!rc) rc = recording_writer_poses(&w, v, n, e) || recording_writer_finish(&w, e);
    recording_writer_free(&w);
    cloud_free(&c);
    free(v);
    return rc ? -1 : 0;
}

/* CPU seconds of this thread (user + kernel): other processes on a shared
 * machine preempt both ways alike without counting against either. */
static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Read one file with read() into buf; bytes read. */
static size_t read_file(const char *path, unsigned char *buf, size_t cap)
{
    size_t total = 0;
    int fd = open(path, O_RDONLY);
    if (fd < 0) return 0;
    for (ssize_t got; (got = read(fd, buf, cap)) > 0; ) total += (size_t)got;
    close(fd);
    return total;
}

/* One round: every scan read with read(), then every scan loaded; adds the
 * seconds each way took to t_read and t_load.  Alternating the order between
 * rounds keeps either way from always running second. */
static int bench_round(const struct recording *r, int round, unsigned char *buf, size_t cap, struct cloud *c,
                       double *t_read, double *t_load, size_t *bytes, size_t *points, struct err *e)
{
    *bytes = *points = 0;
    for (int way = 0; way < 2; way++) {
        int load = (way + round) % 2;
        double t0 = cpu_now();
        for (size_t i = 0; i < r->n; i++) {
            if (load) {
                size_t dropped;
                if (recording_load_scan(r, i, c, &dropped, e)) return -1;
                *points += c->n;
            } else {
                *bytes += read_file(r->scan_paths[i], buf, cap);
            }
        }
        *(load ? t_load : t_read) += cpu_now() - t0;
    }
    return 0;
}

static int bench_layout(const char *dir, const char *name, struct err *e)
{
    struct recording r;
    if (recording_load(dir, 0, &r, e)) return -1;
    size_t cap = (size_t)4 << 20, bytes = 0, points = 0;
    unsigned char *buf = malloc(cap);
    struct cloud c;
    cloud_init(&c);
    double best_read = 1e30, best_load = 1e30;
    for (int round = 0; round < 5 && buf; round++) {
        double a = 0, b = 0;
        if (bench_round(&r, round, buf, cap, &c, &a, &b, &bytes, &points, e)) {
            free(buf); cloud_free(&c); recording_free(&r); return -1;
        }
        if (a < best_read) best_read = a;
        if (b < best_load) best_load = b;
    }
    double mb = (double)bytes / 1e6;
    printf("{\"bench\":\"scan_load\",\"layout\":\"%s\",\"scans\":%zu,\"points\":%zu,\"mb_per_s\":%.1f,"
           "\"read_mb_per_s\":%.1f,\"ratio_to_read\":%.3f,\"clock\":\"thread_cpu\"}\n", name, r.n, points, mb / best_load,
           mb / best_read, best_read / best_load);
    free(buf);
    cloud_free(&c);
    recording_free(&r);
    return 0;
}

/* Write scan i's bytes (the file as it is) with open / write() / close. */
static int write_plain(const char *path, const unsigned char *buf, size_t len)
{
    int fd = open(path, O_WRONLY | O_CREAT | O_EXCL, 0644);
    if (fd < 0) return -1;
    size_t put = 0;
    for (ssize_t w; put < len && (w = write(fd, buf + put, len - put)) > 0; ) put += (size_t)w;
    return close(fd) || put != len ? -1 : 0;
}

/* One round of writes: n scans of cloud c through scan_write into a staged
 * folder, and the file's bytes with write_plain into another; each way's
 * seconds added to t_plain and t_ours.  The folders are removed untimed. */
static int write_round(const char *dir, int round, const struct cloud *c, const unsigned char *bytes, size_t len,
                       size_t n, double *t_plain, double *t_ours, struct err *e)
{
    char out[512], plain[512], path[1100];
    if (err_cut(snprintf(out, sizeof out, "%s/w%d", dir, round), sizeof out) ||
        err_cut(snprintf(plain, sizeof plain, "%s/p%d", dir, round), sizeof plain))
        return err_set(e, "path too long");
    struct fileio_stage st;
    if (fileio_stage_open(&st, out, e) || fileio_mkdirs(plain, e)) return -1;
    int rc = 0;
    for (int way = 0; way < 2 && !rc; way++) {
        int ours = (way + round) % 2;
        double t0 = cpu_now();
        for (size_t i = 0; i < n && !rc; i++) {
            if (err_cut(snprintf(path, sizeof path, "%s/%06zu.pcd", ours ? st.tmp : plain, i), sizeof path))
                rc = err_set(e, "path too long");
            else if (ours) rc = scan_write(path, SCAN_PCD, c, e);
            else if (write_plain(path, bytes, len)) rc = err_set(e, "%s: write failed", path);
        }
        *(ours ? t_ours : t_plain) += cpu_now() - t0;
    }
    fileio_stage_abort(&st);
    if (fileio_remove_tree(plain, e)) rc = -1;
    return rc;
}

/* The PCD writer against plain writes of the same bytes, best of five. */
static int bench_write(const char *dir, struct err *e)
{
    struct recording r;
    if (recording_load(dir, 0, &r, e)) return -1;
    struct cloud c;
    cloud_init(&c);
    size_t dropped, len = 0, n = r.n;
    char *bytes = NULL;
    int rc = recording_load_scan(&r, 0, &c, &dropped, e) ||
             fileio_read(r.scan_paths[0], (size_t)1 << 30, &bytes, &len, e);
    double best_plain = 1e30, best_ours = 1e30;
    for (int round = 0; round < 5 && !rc; round++) {
        double a = 0, b = 0;
        rc = write_round(".", round, &c, (const unsigned char *)bytes, len, n, &a, &b, e);
        if (a < best_plain) best_plain = a;
        if (b < best_ours) best_ours = b;
    }
    if (!rc) {
        double mb = (double)(len * n) / 1e6;
        printf("{\"bench\":\"scan_write\",\"layout\":\"pcd\",\"scans\":%zu,\"points\":%zu,\"mb_per_s\":%.1f,"
               "\"write_mb_per_s\":%.1f,\"ratio_to_write\":%.3f,\"clock\":\"thread_cpu\"}\n", n, c.n * n,
               mb / best_ours, mb / best_plain, best_plain / best_ours);
    }
    free(bytes);
    cloud_free(&c);
    recording_free(&r);
    return rc ? -1 : 0;
}

int main(void)
{
    struct err e;
    size_t n = env_size("BENCH_LOAD_SCANS", 200), pts = env_size("BENCH_LOAD_POINTS", 60000);
    if (make_recording("raw", SCAN_RAW, n, pts, &e) || bench_layout("raw", "raw", &e) ||
        make_recording("pcd", SCAN_PCD, n, pts, &e) || bench_layout("pcd", "pcd", &e) || bench_write("pcd", &e)) {
        fprintf(stderr, "bench_load: %s\n", e.msg);
        return 1;
    }
    return 0;
}
