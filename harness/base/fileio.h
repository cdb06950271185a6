/* fileio.h: whole-file reads and atomic writes (temporary file, then rename).
 *
 * Every file revisit writes goes through afile: it is written under a
 * temporary name in the same folder, flushed, fsync'ed (unless it lies in a
 * staged folder, below) and renamed over the target only when complete, so a crash or a full disk never leaves a
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
    char *buf;       /* the stream's buffer, freed by commit and abort */
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

/* A folder written as a whole.  Files go into a hidden folder beside path
 * (PARENT/.staged-BASE-PID-K, same file system); path is untouched until
 * fileio_stage_commit syncs the file system once (syncfs) and renames the
 * folder into place, so no half-written folder is ever visible there.
 * afile does not fsync files under a .staged- folder one by one: the commit
 * covers them (each such file's write-out to the disk is started when it is
 * committed, so that sync mostly finds it done).  A folder left by a killed run is removed by the next
 * fileio_stage_open of the same path (its process is gone).
 *
 *     struct fileio_stage st;
 *     if (fileio_stage_open(&st, "out/rec", e)) return -1;
 *     ... write files under st.tmp ...
 *     if (fileio_stage_commit(&st, "recording.json", e)) ...   // else:
 *     fileio_stage_abort(&st);                                 // always safe
 *
 * When path is already a folder holding files (a caller allowed that, e.g.
 * with --replace), commit moves the staged entries in one by one instead:
 * first it removes path/LAST, then replaces each other entry of the same
 * name whole (a folder by a folder), and moves LAST in at the end; entries
 * of path not staged stay.  0 or -1 (e names the folder and errno; the
 * staged folder is removed). */
#define FILEIO_STAGED ".staged-"
struct fileio_stage {
    char path[4096];
    char tmp[4160];
};
int fileio_stage_open(struct fileio_stage *s, const char *path, struct err *e);
int fileio_stage_commit(struct fileio_stage *s, const char *last, struct err *e);
void fileio_stage_abort(struct fileio_stage *s);

/* Join dir and name into out (size n); name absolute stays as is. */
/* Returns 0, or -1 when the joined path does not fit in n bytes: out is
 * then "" (any use fails loudly, never on a shortened path). */
int fileio_join(char *out, size_t n, const char *dir, const char *name);

/* The folder part of path ("." when none) into out. */
void fileio_dirname(char *out, size_t n, const char *path);

#endif
