/* recording_digest.c: what a recording holds, as one 64-bit digest, so that
 * caches and finished sweep cells are tied to content, not to a path.
 *
 * The digest covers the manifest's bytes, the poses as read (seconds) and
 * the content hash of every scan file. Scan hashes are kept beside the
 * manifest in MANIFEST.digest, one line per scan:
 *
 *     revisit-digest-2
 *     SIZE MTIME_NS INODE CTIME_NS HASH16 PATH
 *
 * A scan whose size, modification time, inode number and status-change
 * time all match its line keeps its hash (a stat, no read); any other is
 * read and hashed again and the file is rewritten.  The mtime alone is not
 * enough: a user can set it back (touch -d) after rewriting a file at the
 * same size.  The ctime cannot be set by a user, and every write or
 * replacement of the file moves it (or, for a new file renamed into
 * place, the inode changes).  A digest file of another version is read as
 * empty, so every scan is hashed once again.  When the folder is read-only
 * the hashes are simply computed on every run.
 */
#include "harness/io/recording.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"

#define RD_MAGIC "revisit-digest-2"

struct rd_entry { unsigned long long size, mtime, ino, ctime, hash; };

/* Stored entries for the scans of rec (by index, only where the path
 * matches); absent ones stay zero. */
static void rd_load(const struct recording *rec, const char *path, struct rd_entry *v)
{
    char *buf;
    size_t len;
    if (fileio_read(path, (size_t)1 << 30, &buf, &len, NULL)) return;
    char *save = NULL, *line = strtok_r(buf, "\n", &save);
    if (!line || strcmp(line, RD_MAGIC)) { free(buf); return; }
    for (size_t k = 0; k < rec->n && (line = strtok_r(NULL, "\n", &save)); k++) {
        struct rd_entry x;
        int off = 0;
        if (sscanf(line, "%llu %llu %llu %llu %llx %n", &x.size, &x.mtime, &x.ino, &x.ctime, &x.hash, &off) != 5 ||
            !off)
            break;
        if (!strcmp(line + off, rec->scan_paths[k])) v[k] = x;
    }
    free(buf);
}

static int rd_store(const struct recording *rec, const char *path, const struct rd_entry *v, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    fprintf(a.f, "%s\n", RD_MAGIC);
    for (size_t k = 0; k < rec->n; k++)
        fprintf(a.f, "%llu %llu %llu %llu %016llx %s\n", v[k].size, v[k].mtime, v[k].ino, v[k].ctime, v[k].hash,
                rec->scan_paths[k]);
    return afile_commit(&a, e);
}

static unsigned long long rd_ns(struct timespec t)
{
    return (unsigned long long)t.tv_sec * 1000000000ull + (unsigned long long)t.tv_nsec;
}

/* Hash scan k unless its stored entry still matches its size, mtime,
 * inode and ctime. */
static int rd_scan(const struct recording *rec, size_t k, struct rd_entry *x, size_t *hashed, struct err *e)
{
    struct stat st;
    if (stat(rec->scan_paths[k], &st)) return err_at(e, rec->scan_paths[k], 0, "cannot stat: %s", strerror(errno));
    struct rd_entry now = {(unsigned long long)st.st_size, rd_ns(st.st_mtim), (unsigned long long)st.st_ino,
                           rd_ns(st.st_ctim), 0};
    if (x->hash && x->size == now.size && x->mtime == now.mtime && x->ino == now.ino && x->ctime == now.ctime)
        return 0;
    uint64_t h;
    if (fileio_hash_file(rec->scan_paths[k], &h, e)) return err_wrap(e, "scan %zu", k);
    now.hash = h ? h : 1;
    *x = now;
    (*hashed)++;
    return 0;
}

int recording_digest(const struct recording *rec, uint64_t *digest, size_t *hashed, struct err *e)
{
    size_t fresh = 0;
    char table[RECORDING_PATH_MAX + 16];
    int n = snprintf(table, sizeof table, "%s.digest", rec->manifest);
    if (n < 0 || (size_t)n >= sizeof table) return err_at(e, rec->manifest, 0, "path too long for its digest file");
    struct rd_entry *v = calloc(rec->n ? rec->n : 1, sizeof *v);
    if (!v) return err_set(e, "%s: out of memory", rec->manifest);
    rd_load(rec, table, v);
    uint64_t h;
    int rc = fileio_hash_file(rec->manifest, &h, e);
    for (size_t k = 0; !rc && k < rec->n; k++) rc = rd_scan(rec, k, &v[k], &fresh, e);
    if (!rc) {
        h = fileio_hash_bytes(h, rec->poses, rec->n * sizeof *rec->poses);
        for (size_t k = 0; k < rec->n; k++) h = fileio_hash_bytes(h, &v[k].hash, sizeof v[k].hash);
        struct err ignored;
        if (fresh) (void)rd_store(rec, table, v, &ignored);  /* a read-only folder only costs the reads */
        *digest = h;
        if (hashed) *hashed = fresh;
    }
    free(v);
    return rc;
}
