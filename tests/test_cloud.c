/* test_cloud.c: the point-cloud container and atomic file writes. */
#include <math.h>
#include <stdlib.h>
#include <sys/stat.h>

#include "harness/base/cloud.h"
#include "harness/base/fileio.h"
#include "tests/check.h"

static void test_cloud(void)
{
    struct cloud c;
    cloud_init(&c);
    for (int k = 0; k < 3000; k++) if (cloud_push(&c, (float)k, 0, 1, 0.5f)) CHECK(0, "push grows past the first block");
    CHECK(c.n == 3000, "push appends one point each");
    CHECK(CLOUD_X(&c, 2999) == 2999.0f, "pushed values stay in place after growth");
    CHECK(!cloud_enable_ring(&c) && c.ring && c.ring[2999] == 0, "ring array is added zero-filled");
    CLOUD_Y(&c, 5) = NAN;
    CLOUD_Z(&c, 7) = INFINITY;
    c.ring[8] = 42;
    size_t dropped = cloud_drop_nonfinite(&c);
    CHECK(dropped == 2 && c.n == 2998, "non-finite points are dropped and counted");
    CHECK(CLOUD_X(&c, 5) == 6.0f && CLOUD_X(&c, 6) == 8.0f && c.ring[6] == 42,
          "dropping keeps order and moves ring entries with their points");
    struct cloud d;
    cloud_init(&d);
    CHECK(!cloud_copy(&d, &c) && d.n == c.n && d.ring && d.ring[6] == 42 && !d.time, "copy carries optional fields");
    cloud_free(&d);
    cloud_free(&c);
    CHECK(c.n == 0 && c.pts == NULL, "free resets to empty");
    cloud_free(&c);
    CHECK(cloud_reserve(&c, CLOUD_MAX_POINTS + 1) == -1 && c.cap == 0, "a reserve beyond the bound is refused untouched");
}

static void test_atomic(void)
{
    struct err e;
    CHECK(!fileio_write("a.txt", "hello", 5, &e), "atomic write succeeds");
    char *buf; size_t len;
    CHECK(!fileio_read("a.txt", 100, &buf, &len, &e) && len == 5 && !strcmp(buf, "hello"), "read back what was written");
    free(buf);
    CHECK(fileio_read("a.txt", 3, &buf, &len, &e) == -1, "a file over the size limit is refused");
    CHECK_MSG(e.msg, "a.txt", "the size-limit message names the file");
    setenv("REVISIT_FAULT_WRITE_BYTES", "2", 1);
    CHECK(fileio_write("a.txt", "longer text", 11, &e) == -1, "an injected full disk fails the write");
    CHECK_MSG(e.msg, "No space left", "the failure says the disk is full");
    unsetenv("REVISIT_FAULT_WRITE_BYTES");
    CHECK(!fileio_read("a.txt", 100, &buf, &len, &e) && !strcmp(buf, "hello"), "a failed write leaves the old file intact");
    free(buf);
    CHECK(fileio_write("no/such/dir/x", "a", 1, &e) == -1, "writing into a missing folder fails");
    CHECK_MSG(e.msg, "no/such/dir/x", "that error names the path");
    CHECK(!fileio_mkdirs("p/q/r", &e), "mkdirs creates nested folders");
    struct stat st;
    CHECK(!stat("p/q/r", &st) && S_ISDIR(st.st_mode), "the nested folder exists");
}

int main(void)
{
    test_cloud();
    test_atomic();
    return check_done();
}
