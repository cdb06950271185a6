/* fileio.h: whole-file reads and atomic writes (temporary file, then rename).
 *
 * Every file revisit writes goes through afile: it is written under a
 * temporary name in the same folder, flushed, fsync'ed and renamed over the
 * target only when complete, so a crash or a full disk never leaves a
 * truncated file where a good one was expected.
 *
 *     struct afile a;
 *     if (afile_open(&a, "out/result.json", e)) return -1;
 *     fprintf(a.f, ...);
 *     return afile_commit(&a, e);      // or afile_abort(&a) on error
 *
 * Fault injection for tests: when the environment variable
 * REVISIT_FAULT_WRITE_BYTES=N is set, a commit of a file larger than N bytes
 * fails as if the disk were full (ENOSPC), and the temporary file is removed.
 */
#ifndef RV_FILEIO_H
#define RV_FILEIO_H

#include <stdio.h>
#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"

struct afile {
    FILE *f;
    char path[4096];
    char tmp[4160];
};

/* Open a temporary file beside path. 0 or -1 (e names the folder and errno). */
int afile_open(struct afile *a, const char *path, struct err *e);
/* Flush, sync, close, rename. On failure the temporary is removed. 0 or -1. */
int afile_commit(struct afile *a, struct err *e);
/* Close and remove the temporary; safe to call after a failed commit. */
void afile_abort(struct afile *a);

/* Write len bytes to path atomically. 0 or -1. */
int fileio_write(const char *path, const void *data, size_t len, struct err *e);

/* Open path for reading without blocking on a FIFO or device, refuse what
 * is not a regular file ("not a regular file (a FIFO), expected WHAT"), then
 * switch the descriptor back to blocking reads. The size goes to *size when
 * size is not NULL. 0 with *fd open (the caller closes it), or -1 with *fd
 * -1 and e naming the path. */
int fileio_open_regular(const char *path, const char *what, int *fd, size_t *size, struct err *e);

/* Read a whole file into a NUL-terminated malloc'ed buffer; the caller frees.
 * Only regular files are read (fileio_open_regular).
 * Refuses files larger than max_bytes with a clear message. 0 or -1. */
int fileio_read(const char *path, size_t max_bytes, char **buf, size_t *len, struct err *e);

/* A 64-bit content hash of len bytes (FNV-1a over 8-byte words, then the
 * tail bytes), continuing from h (start with FILEIO_HASH_SEED). Not
 * cryptographic: it tells a changed file from an unchanged one. */
#define FILEIO_HASH_SEED 0xcbf29ce484222325ull
uint64_t fileio_hash_bytes(uint64_t h, const void *data, size_t len);

/* fileio_hash_bytes over a whole regular file, read in blocks. 0 or -1. */
int fileio_hash_file(const char *path, uint64_t *h, struct err *e);

/* Remove a folder and what it holds (symbolic links are removed, never
 * followed). A missing path is no error. 0 or -1. */
int fileio_remove_tree(const char *path, struct err *e);

/* mkdir -p. 0 or -1. */
int fileio_mkdirs(const char *path, struct err *e);

/* Refuse to write into an output folder that already holds something:
 * 0 when path does not exist, is an empty folder, or replace is set; -1 with
 * "--out DIR already holds N entries (first 'NAME'), expected a new or empty
 * folder; give --replace to write over it" (or "... is not a folder") else.
 * Reads the folder only; changes nothing. */
int fileio_out_unused(const char *path, int replace, struct err *e);

/* Join dir and name into out (size n); name absolute stays as is. */
void fileio_join(char *out, size_t n, const char *dir, const char *name);

/* The folder part of path ("." when none) into out. */
void fileio_dirname(char *out, size_t n, const char *path);

#endif
