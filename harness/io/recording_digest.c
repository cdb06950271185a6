/* recording_digest.c: what a recording holds, as one 64-bit digest, so that
 * caches and finished sweep cells are tied to content, not to a path.
 *
 * The digest covers the manifest's bytes, the poses as read (seconds) and
 * the content hash of every scan file. Scan hashes are kept beside the
 * manifest in MANIFEST.digest, one line per scan:
 *
 *     revisit-digest-1
 *     SIZE MTIME_NS HASH16 PATH
 *
 * A scan whose size and modification time match its line keeps its hash
 * (a stat, no read); any other is read and hashed again and the file is
 * rewritten. When the folder is read-only the hashes are simply computed
 * on every run.
 */
#include "harness/io/recording.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"

#define RD_MAGIC "revisit-digest-1"

struct rd_entry { unsigned long long size, mtime, hash; };

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
        if (sscanf(line, "%llu %llu %llx %n", &x.size, &x.mtime, &x.hash, &off) != 3 || !off) break;
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
        fprintf(a.f, "%llu %llu %016llx %s\n", v[k].size, v[k].mtime, v[k].hash, rec->scan_paths[k]);
    return afile_commit(&a, e);
}

/* Hash scan k unless its stored entry still matches its size and mtime. */
static int rd_scan(const struct recording *rec, size_t k, struct rd_entry *x, size_t *hashed, struct err *e)
{
    struct stat st;
    if (stat(rec->scan_paths[k], &st)) return err_at(e, rec->scan_paths[k], 0, "cannot stat: %s", strerror(errno));
    unsigned long long mt = (unsigned long long)st.st_mtim.tv_sec * 1000000000ull + (unsigned long long)st.st_mtim.tv_nsec;
    if (x->hash && x->size == (unsigned long long)st.st_size && x->mtime == mt) return 0;
    uint64_t h;
    if (fileio_hash_file(rec->scan_paths[k], &h, e)) return err_wrap(e, "scan %zu", k);
    *x = (struct rd_entry){(unsigned long long)st.st_size, mt, h ? h : 1};
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
