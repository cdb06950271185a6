/* scan_body.h: internal to the scan readers and writers of harness/io/
 * (scan_io.c, pcd.c, ply.c, and the log writer logwrite.c): whole reads of a scan file and the point body
 * written after a PCD or PLY header.  The format table (scan_io.h) names
 * the readers; they share this, so no reader calls another.
 *
 * Failure contract: the reads return 0, or -1 with e naming the file; the
 * body writers cannot fail (write errors show at afile_commit).  No state;
 * thread-safe on distinct files and clouds.
 */
#ifndef RV_SCAN_BODY_H
#define RV_SCAN_BODY_H

#include <stddef.h>
#include <stdio.h>

#include "harness/base/cloud.h"
#include "harness/base/err.h"

/* Read exactly len bytes from fd into buf.  With finite != NULL, read in
 * blocks and check each for NaN / infinity while it is in cache (len a
 * multiple of 4, buf float-aligned); *finite is 1 when none was found. */
int scan_body_read_full(int fd, void *buf, size_t len, int *finite, const char *path, struct err *e);

/* Read a whole regular file of at most max_bytes into *buf (malloc'ed, one
 * NUL after the bytes; the caller frees), with the bound in the message
 * phrased for scans. */
int scan_body_slurp(const char *path, size_t max_bytes, unsigned char **buf, size_t *len, struct err *e);

/* The point body into f.  scan_body_binary writes one record a point:
 * x y z intensity as float32, then ring as little-endian uint16 and time as
 * float32 when the cloud has them (up to 22 bytes); scan_body_ascii writes
 * one line a point, the same fields, floats with 9 significant digits. */
void scan_body_binary(FILE *f, const struct cloud *c);

/* Point k as scan_body_binary writes it, into rec; the bytes used. */
#define SCAN_BODY_RECORD_MAX 22
size_t scan_body_record(const struct cloud *c, size_t k, unsigned char rec[SCAN_BODY_RECORD_MAX]);
void scan_body_ascii(FILE *f, const struct cloud *c);

#endif
